import { Decimal } from '@registry/metrology';

import { startTestApp, type TestApp } from '../support/test-app';
import { bytesOf, csvRecords, exportAs, ndjsonRecords, PERIOD, seedScenario } from './scenario';

type Scenario = Awaited<ReturnType<typeof seedScenario>>;

/** The day of an instant in a time zone, YYYY-MM-DD (computed here, not by the service). */
const dayIn = (instant: Date, timeZone: string) => new Intl.DateTimeFormat('en-CA', { timeZone }).format(instant);

// What each report holds, checked against the seeded scenario: counts, rows field by field, as-of filtering.
describe('compliance exports: report content', () => {
  let t: TestApp;
  let s: Scenario;
  let asOf: string;
  const ask = (report: string, format: string, extra: Record<string, unknown> = {}) =>
    exportAs(t, s.cast.tokens.admin, { report, format, labIds: [s.cast.lab.id], ...PERIOD, asOf, ...extra });

  beforeAll(async () => {
    t = await startTestApp();
    s = await seedScenario(t.database.prisma);
    asOf = new Date().toISOString();
  });
  afterAll(() => t.close());

  describe('calibration log', () => {
    it('lists the lab’s calibrations performed in the period and submitted by the as-of instant, in order', async () => {
      const res = await ask('calibration-log', 'csv').expect(200);
      expect(res.headers['content-type']).toMatch(/^text\/csv; charset=utf-8/);
      const text = bytesOf(res).toString('utf8');
      expect(text.startsWith('calibration_id,lab,vessel,')).toBe(true);
      expect(text.endsWith('\r\n')).toBe(true);
      expect(text.charCodeAt(0)).not.toBe(0xfeff);
      const rows = csvRecords(bytesOf(res));
      // In the period: first, second, the one under an exception and the voided one; not the one before, not the draft, not lab B's.
      expect(rows.map((r) => r.calibration_id)).toEqual([s.first.id, s.second.id, s.exceptional.id, s.voided.id]);
      expect(rows.map((r) => r.state)).toEqual(['approved', 'approved', 'submitted', 'voided']);
    });

    it('writes a row field by field: ISO 8601 instants, decimals as stored, people by email', async () => {
      const rows = csvRecords(bytesOf(await ask('calibration-log', 'csv').expect(200)));
      const row = rows.find((r) => r.calibration_id === s.first.id);
      expect(row).toMatchObject({
        lab: s.cast.lab.code,
        vessel: 'PIP-25-001',
        vessel_kind: 'one-mark-pipette',
        accuracy_class: 'A',
        performed_at: '2026-02-10T08:30:00.000Z',
        performer: s.cast.people.analyst.email,
        entered_by: s.cast.people.analyst.email,
        balance: 'BAL-03',
        thermometer: 'TH-12',
        verdict: 'pass',
        state: 'approved',
        reviewer: s.cast.people.manager.email,
        reviewed_at: '2026-02-10T08:30:00.000Z',
        voided_at: '',
        inputs: '{"points": []}',
      });
      expect(new Decimal(row?.nominal_volume_ml ?? 'NaN').eq(25)).toBe(true);
      const exceptional = rows.find((r) => r.calibration_id === s.exceptional.id);
      expect(exceptional?.traceability_exception).toBe('Balance BAL-03 past its external calibration; second balance out for repair');
      expect(exceptional?.reviewer).toBe('');
    });

    it('gives the same rows as NDJSON, stored JSON embedded as JSON and decimals as strings', async () => {
      const csv = csvRecords(bytesOf(await ask('calibration-log', 'csv').expect(200)));
      const res = await ask('calibration-log', 'ndjson').expect(200);
      expect(res.headers['content-type']).toMatch(/^application\/x-ndjson/);
      const lines = ndjsonRecords(bytesOf(res));
      expect(lines.map((l) => l.calibration_id)).toEqual(csv.map((r) => r.calibration_id));
      const exceptional = lines.find((l) => l.calibration_id === s.exceptional.id);
      expect(exceptional?.results).toEqual({ meanVolumeMl: '24.9912' });
      expect(exceptional?.reviewer).toBeNull();
      expect(typeof exceptional?.nominal_volume_ml).toBe('string');
    });

    it('leaves out what was recorded after the as-of instant, and reviews made after it', async () => {
      const earlier = new Date(s.first.createdAt.getTime() - 1).toISOString();
      const rows = csvRecords(bytesOf(await ask('calibration-log', 'csv', { asOf: earlier }).expect(200)));
      expect(rows).toEqual([]);
    });
  });

  describe('personal factor register', () => {
    it('lists a person’s factors for a vessel with the superseded one pointing at its successor', async () => {
      const rows = csvRecords(bytesOf(await ask('factor-register', 'csv').expect(200)));
      expect(rows.map((r) => [r.factor_id, r.state, r.superseded_by])).toEqual([
        [s.older.id, 'superseded', s.newer.id],
        [s.newer.id, 'current', ''],
      ]);
      const older = rows[0];
      expect(older).toMatchObject({
        person: s.cast.people.analyst.email,
        vessel: 'PIP-25-001',
        factor_kind: 'single',
        valid_from: '2025-11-20T09:00:00.000Z',
        ended_at: '2026-02-10T08:30:00.000Z',
        calibration_id: s.before.id,
      });
      expect(new Decimal(older?.factor ?? 'NaN').eq('0.9995')).toBe(true);
      expect(new Decimal(older?.expanded_uncertainty_ml ?? 'NaN').eq('0.012')).toBe(true);
    });
  });

  describe('balance check log', () => {
    it('lists the checks of the period with the minimum weight each determined and the one in force', async () => {
      const rows = csvRecords(bytesOf(await ask('balance-check-log', 'csv').expect(200)));
      expect(rows.map((r) => [r.check_id, r.kind, r.passed])).toEqual([
        [s.check.id, 'usp41', 'true'],
        [s.quickCheck.id, 'quick', 'true'],
      ]);
      expect(new Decimal(rows[0]?.minimum_weight_g ?? 'NaN').eq('0.082')).toBe(true);
      expect(rows[1]?.minimum_weight_g).toBe('');
      // The quick check a day later works under the minimum weight the USP <41> check determined.
      expect(new Decimal(rows[1]?.minimum_weight_in_force_g ?? 'NaN').eq('0.082')).toBe(true);
      expect(rows[0]).toMatchObject({ balance: 'BAL-03', reference_weight: 'CW-E2-100', weight_class: 'E2' });
    });
  });

  describe('inventory status register', () => {
    it('lists every item of the lab with its status and an overdue flag that matches the due dates on record', async () => {
      const rows = csvRecords(bytesOf(await ask('inventory-register', 'csv').expect(200)));
      const prisma = t.database.prisma;
      const labItems =
        (await prisma.vessel.count({ where: { labId: s.cast.lab.id } })) +
        (await prisma.balance.count({ where: { labId: s.cast.lab.id } })) +
        (await prisma.referenceWeight.count({ where: { labId: s.cast.lab.id } })) +
        (await prisma.instrument.count({ where: { labId: s.cast.lab.id } }));
      expect(rows).toHaveLength(labItems);
      // Expected due dates read from the due-date feature's view, compared here with the as-of day in the lab's zone.
      const due = await prisma.$queryRaw<{ subject_id: string; due_on: Date }[]>`
        SELECT subject_id::text, due_on FROM due_items WHERE lab_id = ${s.cast.lab.id}::uuid AND person_id IS NULL`;
      const today = dayIn(new Date(asOf), s.cast.lab.timeZone);
      for (const row of rows) {
        const dates = due.filter((d) => d.subject_id === row.item_id).map((d) => d.due_on.toISOString().slice(0, 10));
        const next = dates.sort()[0] ?? '';
        expect({ tag: row.asset_tag, next: row.next_due_on, overdue: row.overdue }).toEqual({
          tag: row.asset_tag,
          next,
          overdue: next !== '' && next < today ? 'true' : 'false',
        });
      }
      const balance = rows.find((r) => r.asset_tag === 'BAL-03');
      expect(balance).toMatchObject({ item_kind: 'balance', status: 'in-service', last_check_result: 'pass' });
      expect(balance?.overdue).toBe('true');
      const pipette = rows.find((r) => r.asset_tag === 'PIP-25-001');
      expect(pipette).toMatchObject({ last_calibration: '2026-05-05T10:00:00.000Z', last_calibration_result: 'pass' });
    });

    it('reports the status an item had at the as-of instant, from the audited status changes', async () => {
      const before = new Date().toISOString();
      await t.http
        .patch(`/v1/vessels/${s.flask.id}`)
        .set({ authorization: `Bearer ${s.cast.tokens.manager}`, 'if-match': '"v1"' })
        .send({ status: 'quarantined', reason: 'Chipped rim' })
        .expect(200);
      const then = csvRecords(bytesOf(await ask('inventory-register', 'csv', { asOf: before }).expect(200)));
      const now = csvRecords(bytesOf(await ask('inventory-register', 'csv', { asOf: new Date().toISOString() }).expect(200)));
      expect(then.find((r) => r.asset_tag === 'VF-100-007')?.status).toBe('in-service');
      expect(now.find((r) => r.asset_tag === 'VF-100-007')?.status).toBe('quarantined');
    });
  });

  describe('overdue and exceptions summary', () => {
    it('names work done under an exception or with an overdue balance, and who did it', async () => {
      const rows = csvRecords(bytesOf(await ask('overdue-summary', 'csv').expect(200)));
      const exception = rows.filter((r) => r.finding === 'used-under-exception');
      expect(exception).toEqual([
        expect.objectContaining({
          record_id: s.exceptional.id,
          person: s.cast.people.analyst.email,
          occurred_at: '2026-05-05T10:00:00.000Z',
        }),
      ]);
      // BAL-03 was due 2026-03-01: the calibrations after that day used it while overdue (the voided one does not count).
      const overdueUse = rows.filter((r) => r.finding === 'used-while-overdue').map((r) => [r.asset_tag, r.record_id]);
      expect(overdueUse).toEqual([
        ['BAL-03', s.second.id],
        ['BAL-03', s.exceptional.id],
      ]);
      expect(rows.some((r) => r.finding === 'overdue-at-as-of' && r.asset_tag === 'BAL-03')).toBe(true);
    });
  });

  describe('audit trail extract', () => {
    it('holds the period’s entries of the lab up to the as-of instant and the chain verification', async () => {
      const now = new Date().toISOString();
      const res = await exportAs(t, s.cast.tokens.auditor, {
        report: 'audit-trail',
        format: 'ndjson',
        from: '2026-01-01T00:00:00Z',
        to: '2100-01-01T00:00:00Z',
        asOf: now,
      }).expect(200);
      const lines = ndjsonRecords(bytesOf(res));
      const expected = await t.database.prisma.auditEntry.count({ where: { occurredAt: { lte: new Date(now) } } });
      expect(lines).toHaveLength(expected);
      expect(lines.map((l) => Number(l.seq))).toEqual([...lines.map((l) => Number(l.seq))].sort((a, b) => a - b));
      expect(res.headers['audit-chain']).toMatch(new RegExp(`^intact; entries=${expected}; head-seq=`));
      const record = await t.http.get(`/v1/exports/${res.headers['export-id']}`).set({ authorization: `Bearer ${s.cast.tokens.auditor}` });
      expect(record.body.summary.auditChain).toMatchObject({ intact: true, entriesChecked: expected });
    });
  });
});
