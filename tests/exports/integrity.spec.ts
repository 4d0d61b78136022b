import { bearer } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { pdfPages } from './pdf-text';
import { bytesOf, csvRecords, exportAs, PERIOD, seedScenario, sha256 } from './scenario';

type Scenario = Awaited<ReturnType<typeof seedScenario>>;

// The PDF's text, reproducibility, the export registry and verification of issued files.
describe('compliance exports: PDF, reproducibility and verification', () => {
  let t: TestApp;
  let s: Scenario;
  let asOf: string;
  const request = (extra: Record<string, unknown> = {}) => ({
    report: 'calibration-log',
    format: 'csv',
    labIds: [s.cast.lab.id],
    ...PERIOD,
    asOf,
    ...extra,
  });
  /** The export's record: already ended when the client has read the end of the response. */
  const record = async (id: string, token = s.cast.tokens.admin) =>
    (await t.http.get(`/v1/exports/${id}`).set(bearer(token)).expect(200)).body as Record<string, unknown>;

  beforeAll(async () => {
    t = await startTestApp();
    s = await seedScenario(t.database.prisma);
    asOf = new Date().toISOString();
  });
  afterAll(() => t.close());

  describe('PDF', () => {
    it('has a title page, a summary with the state chart, the rows with repeated headers and numbered pages', async () => {
      const res = await exportAs(t, s.cast.tokens.admin, request({ format: 'pdf' })).expect(200);
      expect(res.headers['content-type']).toBe('application/pdf');
      const bytes = bytesOf(res);
      expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
      const pages = await pdfPages(bytes);
      expect(pages.length).toBeGreaterThanOrEqual(3);
      const [title, summary, ...table] = pages as [string, string, ...string[]];
      expect(title).toContain('Calibration log');
      expect(title).toContain(s.cast.lab.code);
      expect(title).toContain(asOf);
      expect(title).toContain(s.cast.people.admin.email);
      expect(title).toContain('does not replace');
      expect(summary).toContain('Rows in this report: 4');
      expect(summary).toMatch(/Item states per lab/);
      expect(summary).toMatch(new RegExp(`${s.cast.lab.code}\\s+5 \\(in-service 5\\)`));
      const rows = table.join(' ');
      for (const tag of ['PIP-25-001', 'VF-100-007', 'BAL-03']) expect(rows).toContain(tag);
      for (const [i, page] of pages.entries()) expect(page).toContain(`page ${i + 1}`);
      for (const page of table) expect(page).toMatch(/Lab\s+Vessel\s+Nominal mL\s+Performed/);
    });

    it('repeats the table header on every page of a long table', async () => {
      const extra = Array.from({ length: 120 }, (_, i) => i);
      await t.database.prisma.$executeRaw`
        INSERT INTO calibrations (lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                  delivery_mode, inputs, results, verdict, library_version, submitted_at, created_at)
        SELECT ${s.cast.lab.id}::uuid, ${s.pipette.id}::uuid, ${s.cast.people.analyst.id}::uuid, ${s.cast.people.analyst.id}::uuid,
               ${s.balance.id}::uuid, ${s.thermometer.id}::uuid, 'submitted', '2026-01-02T00:00:00Z'::timestamptz + n * interval '1 hour',
               'deliver', '{}'::jsonb, '{}'::jsonb, 'pass', 'test', '2026-01-02T00:00:00Z'::timestamptz + n * interval '1 hour',
               '2026-01-02T00:00:00Z'::timestamptz
          FROM unnest(${extra}::int[]) AS n`;
      const pages = await pdfPages(
        bytesOf(await exportAs(t, s.cast.tokens.admin, request({ format: 'pdf', asOf: new Date().toISOString() })).expect(200)),
      );
      const table = pages.slice(2);
      expect(table.length).toBeGreaterThanOrEqual(3);
      for (const page of table) expect(page).toMatch(/Lab\s+Vessel\s+Nominal mL\s+Performed/);
      expect(pages[1]).toContain('Rows in this report: 124');
    });

    it('shows the audit chain verification in the audit trail extract', async () => {
      const pages = await pdfPages(
        bytesOf(await exportAs(t, s.cast.tokens.auditor, request({ report: 'audit-trail', format: 'pdf', labIds: undefined })).expect(200)),
      );
      expect(pages[0]).toContain('Audit trail extract');
      expect(pages[1]).toMatch(/Intact: \d+ entries checked/);
    });
  });

  describe('reproducibility', () => {
    it.each(['csv', 'ndjson', 'pdf'])('gives the same %s bytes and digest for the same request and as-of', async (format) => {
      const one = await exportAs(t, s.cast.tokens.admin, request({ format, asOf: PERIOD.to })).expect(200);
      const two = await exportAs(t, s.cast.tokens.admin, request({ format, asOf: PERIOD.to })).expect(200);
      expect(sha256(bytesOf(one))).toBe(sha256(bytesOf(two)));
      expect(one.headers['export-id']).not.toBe(two.headers['export-id']);
      const [a, b] = [await record(one.headers['export-id'] as string), await record(two.headers['export-id'] as string)];
      expect(a.sha256).toBe(sha256(bytesOf(one)));
      expect(b.sha256).toBe(a.sha256);
    });

    it('keeps an as-of report unchanged when later work is recorded', async () => {
      const first = bytesOf(await exportAs(t, s.cast.tokens.admin, request()).expect(200));
      await t.database.prisma.calibration.create({
        data: {
          labId: s.cast.lab.id,
          vesselId: s.pipette.id,
          performerId: s.cast.people.analyst.id,
          enteredById: s.cast.people.analyst.id,
          balanceId: s.balance.id,
          thermometerId: s.thermometer.id,
          state: 'submitted',
          performedAt: new Date('2026-06-20T08:00:00Z'),
          deliveryMode: 'deliver',
          inputs: {},
          results: {},
          verdict: 'pass',
          libraryVersion: 'test',
          submittedAt: new Date('2026-06-20T08:05:00Z'),
        },
      });
      const again = bytesOf(await exportAs(t, s.cast.tokens.admin, request()).expect(200));
      expect(sha256(again)).toBe(sha256(first));
      const later = csvRecords(bytesOf(await exportAs(t, s.cast.tokens.admin, request({ asOf: new Date().toISOString() })).expect(200)));
      expect(later.some((r) => r.performed_at === '2026-06-20T08:00:00.000Z')).toBe(true);
    });
  });

  describe('export registry', () => {
    it('records who exported what, when, the rows and bytes delivered and their SHA-256, and audits it', async () => {
      const res = await exportAs(t, s.cast.tokens.manager, request({ format: 'ndjson' })).expect(200);
      const id = res.headers['export-id'] as string;
      expect(res.headers.location).toBe(`/v1/exports/${id}`);
      expect(res.headers['content-disposition']).toMatch(/^attachment; filename="calibration-log_.+\.ndjson"$/);
      const r = await record(id);
      expect(r).toMatchObject({
        report: 'calibration-log',
        format: 'ndjson',
        labIds: [s.cast.lab.id],
        from: PERIOD.from,
        to: PERIOD.to,
        asOf,
        requestedBy: { id: s.cast.people.manager.id, email: s.cast.people.manager.email },
        state: 'completed',
        byteCount: bytesOf(res).length,
        rowCount: bytesOf(res).toString('utf8').split('\n').filter(Boolean).length,
        sha256: sha256(bytesOf(res)),
      });
      const audit = await t.database.prisma.auditEntry.findMany({ where: { entityType: 'export', entityId: id }, orderBy: { seq: 'asc' } });
      expect(audit.map((a) => [a.action, a.actorId, a.labId])).toEqual([
        ['export', s.cast.people.manager.id, s.cast.lab.id],
        ['export-completed', s.cast.people.manager.id, s.cast.lab.id],
      ]);
      expect(audit[1]?.newValues).toMatchObject({ sha256: sha256(bytesOf(res)), state: 'completed' });
      const list = await t.http.get('/v1/exports').set(bearer(s.cast.tokens.manager)).expect(200);
      expect(list.body.items.map((e: { id: string }) => e.id)).toContain(id);
    });

    it('refuses to change or delete an ended export in the database itself', async () => {
      const res = await exportAs(t, s.cast.tokens.admin, request()).expect(200);
      const id = res.headers['export-id'] as string;
      await record(id);
      await expect(t.database.prisma.$executeRaw`UPDATE exports SET row_count = 0 WHERE id = ${id}::uuid`).rejects.toThrow(/frozen/);
      await expect(t.database.prisma.$executeRaw`DELETE FROM exports WHERE id = ${id}::uuid`).rejects.toThrow(/never deleted/);
      await expect(
        t.database.prisma
          .$executeRaw`INSERT INTO exports (report, format, requested_by_id, all_labs, period_from, period_to, as_of, parameters, state, started_at, ended_at)
          VALUES ('calibration-log', 'csv', ${s.cast.people.admin.id}::uuid, true, now(), now() + interval '1 day', now(), '{}', 'completed', now(), now())`,
      ).rejects.toThrow(/exports_completed_has_digest/);
    });
  });

  describe('verification', () => {
    let issued: Buffer;
    let issuedId: string;
    beforeAll(async () => {
      const res = await exportAs(t, s.cast.tokens.admin, request({ format: 'pdf' })).expect(200);
      issued = bytesOf(res);
      issuedId = res.headers['export-id'] as string;
      await record(issuedId);
    });

    it('says a digest was issued, when and by whom', async () => {
      const res = await t.http
        .post('/v1/exports/verification')
        .set(bearer(s.cast.tokens.auditor))
        .send({ sha256: sha256(issued).toUpperCase() })
        .expect(200);
      expect(res.body).toMatchObject({ sha256: sha256(issued), issued: true });
      const match = res.body.exports.find((e: { id: string }) => e.id === issuedId);
      expect(match).toMatchObject({ state: 'completed', requestedBy: { email: s.cast.people.admin.email }, asOf });
      expect(typeof match.endedAt).toBe('string');
    });

    it('says the same for the uploaded file, and not issued for a file changed by one byte', async () => {
      const ok = await t.http
        .post('/v1/exports/verification/file')
        .set(bearer(s.cast.tokens.admin))
        .set('content-type', 'application/pdf')
        .send(issued)
        .expect(200);
      expect(ok.body.issued).toBe(true);
      expect(ok.body.exports.map((e: { id: string }) => e.id)).toContain(issuedId);
      const changed = Buffer.from(issued);
      changed[changed.length - 10] = (changed[changed.length - 10] ?? 0) ^ 1;
      const no = await t.http
        .post('/v1/exports/verification/file')
        .set(bearer(s.cast.tokens.admin))
        .set('content-type', 'application/octet-stream')
        .send(changed)
        .expect(200);
      expect(no.body).toEqual({ sha256: sha256(changed), issued: false, exports: [] });
    });

    it('verifies an uploaded CSV sent as text/csv', async () => {
      const csv = bytesOf(await exportAs(t, s.cast.tokens.admin, request({ asOf: PERIOD.to })).expect(200));
      const res = await t.http
        .post('/v1/exports/verification/file')
        .set(bearer(s.cast.tokens.admin))
        .set('content-type', 'text/csv')
        .send(csv.toString('utf8'))
        .expect(200);
      expect(res.body).toMatchObject({ sha256: sha256(csv), issued: true });
    });

    it('refuses a malformed digest naming the field', async () => {
      const res = await t.http.post('/v1/exports/verification').set(bearer(s.cast.tokens.admin)).send({ sha256: 'abc' }).expect(400);
      expect(res.body.errors).toEqual([expect.objectContaining({ field: 'sha256' })]);
    });
  });
});
