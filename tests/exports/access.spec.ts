import { bearer, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { bytesOf, exportAs, PERIOD, seedScenario, sha256 } from './scenario';

type Scenario = Awaited<ReturnType<typeof seedScenario>>;

// Who may export which labs, list exports and verify files; and what a refused request says.
describe('compliance exports: access and validation', () => {
  let t: TestApp;
  let s: Scenario;
  const body = (extra: Record<string, unknown> = {}) => ({
    report: 'factor-register',
    format: 'csv',
    labIds: [s.cast.lab.id],
    ...PERIOD,
    ...extra,
  });
  /** The record of an export whose response has been read to its end: ended by then. */
  const settled = (id: string) => t.database.prisma.export.findUniqueOrThrow({ where: { id } });

  beforeAll(async () => {
    t = await startTestApp();
    s = await seedScenario(t.database.prisma);
  });
  afterAll(() => t.close());

  it('lets administrators and auditors export any lab, or every lab', async () => {
    await exportAs(t, s.cast.tokens.admin, body()).expect(200);
    await exportAs(t, s.cast.tokens.auditor, body({ labIds: [s.cast.otherLab.id] })).expect(200);
    const all = await exportAs(t, s.cast.tokens.auditor, body({ labIds: undefined })).expect(200);
    const record = await settled(all.headers['export-id'] as string);
    expect(record).toMatchObject({ allLabs: true, labIds: [], requestedById: s.cast.people.auditor.id });
  });

  it('lets a lab manager export the labs they manage, and by default only those', async () => {
    await exportAs(t, s.cast.tokens.manager, body()).expect(200);
    const mine = await exportAs(t, s.cast.tokens.manager, body({ labIds: undefined })).expect(200);
    expect(await settled(mine.headers['export-id'] as string)).toMatchObject({ allLabs: false, labIds: [s.cast.lab.id] });
    expect(bytesOf(mine).toString('utf8')).not.toContain(s.cast.otherLab.code);
  });

  it('answers 404 for a lab the caller cannot read and 403 for a lab they read but do not manage', async () => {
    const outsider = await exportAs(t, s.cast.tokens.otherManager, body()).expect(404);
    expect(outsider.body.code).toBe('not-found');
    const both = await seedPerson(t.database.prisma, {
      displayName: 'Manager A, analyst B',
      labs: [
        { labId: s.cast.lab.id, role: 'manager' },
        { labId: s.cast.otherLab.id, role: 'analyst' },
      ],
    });
    const token = await sessionFor(t.database.prisma, both.id);
    const res = await exportAs(t, token, body({ labIds: [s.cast.lab.id, s.cast.otherLab.id] })).expect(403);
    expect(res.body.errors).toEqual([expect.objectContaining({ field: 'labIds' })]);
    await exportAs(t, s.cast.tokens.admin, body({ labIds: ['00000000-0000-4000-8000-000000000000'] })).expect(404);
  });

  it('refuses analysts and service credentials, and writes nothing for a refusal', async () => {
    const before = await t.database.prisma.export.count();
    expect((await exportAs(t, s.cast.tokens.analyst, body()).expect(403)).body.code).toBe('forbidden');
    const { key } = await seedCredential(t.database.prisma, s.cast.people.admin.id, ['inventory:read']);
    await exportAs(t, key, body()).expect(403);
    await t.http.post('/v1/exports').send(body()).expect(401);
    expect(await t.database.prisma.export.count()).toBe(before);
  });

  it('names the field of a bad request: unknown report, period backwards, as-of in the future, a lab twice', async () => {
    const fields = async (extra: Record<string, unknown>) =>
      ((await exportAs(t, s.cast.tokens.admin, body(extra)).expect(400)).body.errors as { field: string }[]).map((e) => e.field);
    expect(await fields({ report: 'everything' })).toEqual(['report']);
    expect(await fields({ format: 'xlsx' })).toEqual(['format']);
    expect(await fields({ from: PERIOD.to, to: PERIOD.from })).toEqual(['to']);
    expect(await fields({ asOf: new Date(Date.now() + 3_600_000).toISOString() })).toEqual(['asOf']);
    expect(await fields({ labIds: [s.cast.lab.id, s.cast.lab.id] })).toEqual(['labIds']);
    expect(await fields({ from: 'yesterday' })).toEqual(['from']);
    expect(await fields({ extra: true })).toEqual(['extra']);
  });

  it('lists to lab managers only exports confined to labs they manage', async () => {
    const ofA = await exportAs(t, s.cast.tokens.admin, body()).expect(200);
    const ofAll = await exportAs(t, s.cast.tokens.admin, body({ labIds: undefined })).expect(200);
    const ofB = await exportAs(t, s.cast.tokens.otherManager, body({ labIds: [s.cast.otherLab.id] })).expect(200);
    const ids = async (token: string) =>
      ((await t.http.get('/v1/exports').query({ limit: 200 }).set(bearer(token)).expect(200)).body.items as { id: string }[]).map(
        (e) => e.id,
      );
    const [a, all, b] = [ofA, ofAll, ofB].map((r) => r.headers['export-id'] as string);
    expect(await ids(s.cast.tokens.auditor)).toEqual(expect.arrayContaining([a, all, b]));
    const manager = await ids(s.cast.tokens.manager);
    expect(manager).toContain(a);
    expect(manager).not.toContain(all);
    expect(manager).not.toContain(b);
    const other = await ids(s.cast.tokens.otherManager);
    expect(other).toContain(b);
    expect(other).not.toContain(a);
    expect(other).not.toContain(all);
    await t.http.get(`/v1/exports/${a}`).set(bearer(s.cast.tokens.otherManager)).expect(404);
    await t.http.get('/v1/exports').set(bearer(s.cast.tokens.analyst)).expect(403);
  });

  it('pages the list newest first with a cursor', async () => {
    const page1 = await t.http.get('/v1/exports').query({ limit: 2 }).set(bearer(s.cast.tokens.admin)).expect(200);
    expect(page1.body.items).toHaveLength(2);
    const page2 = await t.http
      .get('/v1/exports')
      .query({ limit: 2, cursor: page1.body.nextCursor as string })
      .set(bearer(s.cast.tokens.admin))
      .expect(200);
    const first = page1.body.items as { id: string; startedAt: string }[];
    const second = page2.body.items as { id: string; startedAt: string }[];
    expect(second.map((e) => e.id)).not.toContain(first[0]?.id);
    expect(second[0]!.startedAt <= first[1]!.startedAt).toBe(true);
  });

  it('does not confirm to another lab’s manager a file of a lab they cannot read', async () => {
    const res = await exportAs(t, s.cast.tokens.manager, body()).expect(200);
    await settled(res.headers['export-id'] as string);
    const digest = sha256(bytesOf(res));
    const mine = await t.http.post('/v1/exports/verification').set(bearer(s.cast.tokens.manager)).send({ sha256: digest }).expect(200);
    expect(mine.body.issued).toBe(true);
    const theirs = await t.http
      .post('/v1/exports/verification')
      .set(bearer(s.cast.tokens.otherManager))
      .send({ sha256: digest })
      .expect(200);
    expect(theirs.body).toEqual({ sha256: digest, issued: false, exports: [] });
    await t.http.post('/v1/exports/verification').set(bearer(s.cast.tokens.analyst)).send({ sha256: digest }).expect(403);
  });
});
