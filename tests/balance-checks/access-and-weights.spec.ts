import { bearer, seedBalance, seedCast, seedCheckWeight, seedCredential } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const DAY = 86_400_000;
const quick = (referenceWeightId: string, extra: Record<string, unknown> = {}) => ({
  kind: 'quick',
  referenceWeightId,
  readingsG: ['100.0001', '100.0000', '100.0001'],
  limitG: '0.0003',
  ...extra,
});

// Who may record and read checks, and which check weights make a check traceable.
describe('balance checks: access and reference weights', () => {
  let t: TestApp;
  let cast: Cast;
  let balanceId: string;
  let weightId: string;
  const post = (body: Record<string, unknown>, token: string, id = balanceId) =>
    t.http.post(`/v1/balances/${id}/checks`).set(bearer(token)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
    balanceId = (await seedBalance(t.database.prisma, cast.lab.id)).id;
    weightId = (await seedCheckWeight(t.database.prisma, cast.lab.id)).id;
  });
  afterAll(() => t.close());

  describe('access', () => {
    it('lets the lab’s analysts, managers and administrators record a check, as themselves', async () => {
      const res = await post(quick(weightId), cast.tokens.analyst).expect(201);
      expect(res.body).toMatchObject({
        kind: 'quick',
        passed: true,
        performedBy: { id: cast.people.analyst.id, displayName: 'Bench Analyst' },
      });
      expect(res.body.results.readings).toHaveLength(3);
      await post(quick(weightId), cast.tokens.manager).expect(201);
      await post(quick(weightId), cast.tokens.admin).expect(201);
    });

    it('answers 404 to another lab’s manager and 403 to an auditor and to service credentials', async () => {
      const other = await post(quick(weightId), cast.tokens.otherManager).expect(404);
      expect(other.body.code).toBe('not-found');
      const auditor = await post(quick(weightId), cast.tokens.auditor).expect(403);
      expect(auditor.body.code).toBe('forbidden');
      const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, [
        'inventory:read',
        'corrections:write',
        'calculations:run',
      ]);
      await post(quick(weightId), key).expect(403);
    });

    it('lets readers of the lab list and read checks, and credentials with inventory:read for that lab', async () => {
      await t.http.get(`/v1/balances/${balanceId}/checks`).set(bearer(cast.tokens.auditor)).expect(200);
      await t.http.get(`/v1/balances/${balanceId}/checks`).set(bearer(cast.tokens.otherManager)).expect(404);
      const reader = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.lab.id]);
      const page = await t.http.get(`/v1/balances/${balanceId}/checks?limit=2`).set(bearer(reader.key)).expect(200);
      expect(page.body.items).toHaveLength(2);
      const next = await t.http
        .get(`/v1/balances/${balanceId}/checks?limit=2&cursor=${page.body.nextCursor}`)
        .set(bearer(reader.key))
        .expect(200);
      expect(next.body.items.length).toBeGreaterThan(0);
      const all = [...page.body.items, ...next.body.items];
      expect(new Set(all.map((c: { id: string }) => c.id)).size).toBe(all.length);
      const times = all.map((c: { performedAt: string }) => c.performedAt);
      expect([...times].sort().reverse()).toEqual(times);
      const elsewhere = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.otherLab.id]);
      await t.http.get(`/v1/balances/${balanceId}/checks`).set(bearer(elsewhere.key)).expect(404);
      const factorsOnly = await seedCredential(t.database.prisma, cast.people.admin.id, ['factors:read'], [cast.lab.id]);
      await t.http.get(`/v1/balances/${balanceId}/checks`).set(bearer(factorsOnly.key)).expect(403);
      const one = page.body.items[0];
      await t.http.get(`/v1/balances/${balanceId}/checks/${one.id}`).set(bearer(reader.key)).expect(200);
      const otherBalance = await seedBalance(t.database.prisma, cast.lab.id);
      await t.http.get(`/v1/balances/${otherBalance.id}/checks/${one.id}`).set(bearer(reader.key)).expect(404);
      await t.http.get(`/v1/balances/${balanceId}/checks?cursor=bm90LWEtY3Vyc29y`).set(bearer(reader.key)).expect(400);
    });
  });

  describe('reference weights', () => {
    const refused = async (weight: string, rule: string) => {
      const res = await post(quick(weight), cast.tokens.analyst).expect(422);
      expect(res.body).toMatchObject({
        code: 'traceability-violation',
        violations: [{ rule, itemId: weight, exceptionAllowed: false }],
        errors: [{ field: 'referenceWeightId', reason: expect.any(String) }],
      });
      return res.body;
    };

    it('refuses a weight of another lab, or none, naming the rule', async () => {
      const foreign = await seedCheckWeight(t.database.prisma, cast.otherLab.id);
      await refused(foreign.id, 'reference-weight-of-lab');
      await refused('00000000-0000-4000-8000-000000000000', 'reference-weight-of-lab');
    });

    it('refuses a weight that is not in service', async () => {
      const w = await seedCheckWeight(t.database.prisma, cast.lab.id, { status: 'quarantined' });
      expect((await refused(w.id, 'reference-weight-in-service')).detail).toMatch(/quarantined/);
    });

    it('refuses a weight whose certificate is overdue at the time of the check, or not on record', async () => {
      const overdue = await seedCheckWeight(t.database.prisma, cast.lab.id, { certificateDue: new Date(Date.now() - 2 * DAY) });
      expect((await refused(overdue.id, 'reference-weight-certificate-current')).detail).toMatch(/was due on/);
      const none = await seedCheckWeight(t.database.prisma, cast.lab.id, { certificateDue: null });
      await refused(none.id, 'reference-weight-certificate-current');
      // A check performed while the certificate was still current is fine.
      const res = await post(
        quick(overdue.id, { performedAt: new Date(Date.now() - 3 * DAY).toISOString() }),
        cast.tokens.analyst,
        (await seedBalance(t.database.prisma, cast.lab.id)).id,
      ).expect(201);
      expect(res.body.inputs.referenceWeight).toMatchObject({ id: overdue.id, valueG: '100.000045', valueSource: 'certificate' });
    });

    it('compares readings with the nominal mass when no certified value is recorded', async () => {
      const nominal = await seedCheckWeight(t.database.prisma, cast.lab.id, { conventionalMassG: null, uncertaintyG: null });
      const res = await post(quick(nominal.id), cast.tokens.analyst).expect(201);
      expect(res.body.inputs.referenceWeight).toMatchObject({ valueG: '100', valueSource: 'nominal', expandedUncertaintyG: null });
      expect(res.body.results.readings[0]).toMatchObject({ deviationG: '0.0001', pass: true });
    });

    it('refuses a weight heavier than the balance’s capacity', async () => {
      const heavy = await seedCheckWeight(t.database.prisma, cast.lab.id, { nominalMassG: '500', conventionalMassG: '500.0002' });
      await refused(heavy.id, 'reference-weight-suitable');
    });
  });

  describe('dates and states', () => {
    it('refuses a performance time more than 5 minutes ahead, and one before the latest recorded check', async () => {
      const b = await seedBalance(t.database.prisma, cast.lab.id);
      const ahead = await post(
        quick(weightId, { performedAt: new Date(Date.now() + 10 * 60_000).toISOString() }),
        cast.tokens.analyst,
        b.id,
      ).expect(400);
      expect(ahead.body.errors).toEqual([{ field: 'performedAt', reason: expect.stringMatching(/future/) }]);
      await post(quick(weightId, { performedAt: new Date(Date.now() + 60_000).toISOString() }), cast.tokens.analyst, b.id).expect(201);
      const late = await post(quick(weightId, { performedAt: new Date(Date.now() - DAY).toISOString() }), cast.tokens.analyst, b.id).expect(
        409,
      );
      expect(late.body).toMatchObject({ code: 'conflict', errors: [{ field: 'performedAt' }] });
    });

    it('refuses checks of a retired balance', async () => {
      const b = await seedBalance(t.database.prisma, cast.lab.id, { status: 'retired' });
      const res = await post(quick(weightId), cast.tokens.analyst, b.id).expect(409);
      expect(res.body).toMatchObject({ code: 'invalid-state', state: 'retired' });
    });

    it('refuses unknown kinds and members with 400', async () => {
      const kind = await post({ ...quick(weightId), kind: 'daily' }, cast.tokens.analyst).expect(400);
      expect(kind.body.errors).toEqual([{ field: 'kind', reason: 'must be one of quick, usp41, eccentricity' }]);
      const extra = await post({ ...quick(weightId), colour: 'red' }, cast.tokens.analyst).expect(400);
      expect(extra.body.errors).toEqual([{ field: 'colour', reason: 'is not a known field' }]);
      const none = await post({ ...quick(weightId), readingsG: [] }, cast.tokens.analyst).expect(400);
      expect(none.body.errors[0].field).toBe('readingsG');
    });
  });
});
