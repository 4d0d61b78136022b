import { bearer } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { factorScenario, type FactorScenario } from './scenario';

// Who may obtain whose factor. Nobody obtains a factor for a person other than the one named, and only
// managers (their lab), auditors and administrators may name someone else; other labs do not exist (404).
describe('factor access', () => {
  let t: TestApp;
  let s: FactorScenario;
  const current = (query: Record<string, string>, token: string) => t.http.get('/v1/factors/current').query(query).set(bearer(token));
  const correct = (body: Record<string, unknown>, token: string) => t.http.post('/v1/factors/corrections').set(bearer(token)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    s = await factorScenario(t.database.prisma);
  });
  afterAll(() => t.close());

  /** Every way to name a person and a vessel. */
  const forms = (
    person: { id: string; email: string },
    externalRef: string,
    vessel: { id: string; assetTag: string },
  ): Record<string, string>[] => [
    { personId: person.id, vesselId: vessel.id },
    { personId: person.id, assetTag: vessel.assetTag },
    { email: person.email, vesselId: vessel.id },
    { email: person.email, assetTag: vessel.assetTag },
    { externalRef, vesselId: vessel.id },
    { externalRef, assetTag: vessel.assetTag },
  ];

  describe('service credentials', () => {
    const lenaPipette = () => ({ personId: s.people.lena.id, vesselId: s.vessels.pipette.id });

    it('need factors:read to look up and corrections:write to correct', async () => {
      expect((await current(lenaPipette(), s.keys.read)).status).toBe(200);
      expect((await correct({ ...lenaPipette(), indicatedVolumeMl: '25' }, s.keys.correct)).status).toBe(200);

      const noLookup = await current(lenaPipette(), s.keys.correct);
      expect(noLookup.status).toBe(403);
      expect(noLookup.body.detail).toMatch(/factors:read/);
      const noCorrection = await correct({ ...lenaPipette(), indicatedVolumeMl: '25' }, s.keys.read);
      expect(noCorrection.status).toBe(403);
      expect(noCorrection.body.detail).toMatch(/corrections:write/);
      expect((await current(lenaPipette(), s.keys.inventoryOnly)).status).toBe(403);
      expect((await t.http.get('/v1/factors').set(bearer(s.keys.inventoryOnly))).status).toBe(403);
    });

    it('reach only the labs they were given: another lab’s vessel does not exist for them', async () => {
      for (const query of forms(s.people.lena, 'DW-ANA-07', s.vessels.pipette)) {
        const res = await current(query, s.keys.otherLabRead);
        expect(res.status).toBe(404);
        expect(res.body.code).toBe('not-found');
      }
      const res = await correct({ ...lenaPipette(), indicatedVolumeMl: '25' }, s.keys.otherLabRead);
      expect(res.body).toMatchObject({ status: 404, code: 'not-found' });
      expect((await t.http.get(`/v1/factors/${s.factors.lenaPipette.id}`).set(bearer(s.keys.otherLabRead))).status).toBe(404);
      // Nor can a problem about the person or the factor leak through: the quarantined vessel, an outsider.
      expect((await current({ personId: s.people.lena.id, vesselId: s.vessels.quarantined.id }, s.keys.otherLabRead)).status).toBe(404);
      expect((await current({ email: 'nobody@waterworks.example', vesselId: s.vessels.pipette.id }, s.keys.otherLabRead)).status).toBe(404);
    });

    it('with every lab, reach every lab', async () => {
      expect((await current(lenaPipette(), s.keys.allLabs)).status).toBe(200);
    });

    it('list the factors of their labs only', async () => {
      const mine = await t.http.get('/v1/factors').query({ limit: 200 }).set(bearer(s.keys.read));
      expect(mine.status).toBe(200);
      expect(mine.body.items.length).toBeGreaterThanOrEqual(4);
      expect(mine.body.items.every((f: { labId: string }) => f.labId === s.labId)).toBe(true);
      const other = await t.http.get('/v1/factors').set(bearer(s.keys.otherLabRead));
      expect(other.body.items).toEqual([]);
    });
  });

  describe('people', () => {
    it('an analyst gets her own factor by every identifier form', async () => {
      for (const query of forms(s.people.lena, 'DW-ANA-07', s.vessels.pipette)) {
        const res = await current(query, s.tokens.lena);
        expect(res.status).toBe(200);
        expect(res.body.factorId).toBe(s.factors.lenaPipette.id);
      }
      const corrected = await correct(
        { email: s.people.lena.email, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '25' },
        s.tokens.lena,
      );
      expect(corrected.body.correctedVolumeMl).toBe('24.99');
    });

    it('an analyst never gets a colleague’s factor, by any identifier form, lookup or correction', async () => {
      for (const query of forms(s.people.colleague, 'DW-ANA-08', s.vessels.pipette)) {
        const res = await current(query, s.tokens.lena);
        expect(res.status).toBe(404);
        expect(res.body.code).toBe('not-found');
        expect(JSON.stringify(res.body)).not.toContain(s.factors.colleaguePipette.id);
        const corrected = await correct({ ...query, indicatedVolumeMl: '25', allowNominalFallback: true }, s.tokens.lena);
        expect(corrected.status).toBe(404);
      }
      // Nor learn whether someone is a member, or has a factor at all, by asking about them.
      expect((await current({ email: s.people.outsider.email, vesselId: s.vessels.pipette.id }, s.tokens.lena)).status).toBe(404);
      expect((await current({ externalRef: 'DW-ANA-99', vesselId: s.vessels.pipette.id }, s.tokens.lena)).status).toBe(404);
      expect((await current({ personId: s.people.colleague.id, vesselId: s.vessels.burette.id }, s.tokens.lena)).status).toBe(404);
      // Nor through the registry reads.
      expect((await t.http.get(`/v1/factors/${s.factors.colleaguePipette.id}`).set(bearer(s.tokens.lena))).status).toBe(404);
      const listed = await t.http.get('/v1/factors').query({ vesselId: s.vessels.pipette.id }).set(bearer(s.tokens.lena));
      expect(listed.body.items.map((f: { id: string }) => f.id)).toEqual([s.factors.lenaPipette.id]);
    });

    it('a person of another lab cannot reach this lab’s vessels, even naming herself', async () => {
      const res = await current({ personId: s.people.outsider.id, vesselId: s.vessels.pipette.id }, s.tokens.outsider);
      expect(res.status).toBe(404);
      expect(res.body.code).toBe('not-found');
    });

    it('the lab’s manager gets any member’s factor; a manager of another lab gets 404', async () => {
      for (const query of forms(s.people.colleague, 'DW-ANA-08', s.vessels.pipette)) {
        const res = await current(query, s.tokens.manager);
        expect(res.status).toBe(200);
        expect(res.body.factorId).toBe(s.factors.colleaguePipette.id);
      }
      const other = await current({ personId: s.people.colleague.id, vesselId: s.vessels.pipette.id }, s.tokens.otherManager);
      expect(other.status).toBe(404);
      expect((await t.http.get(`/v1/factors/${s.factors.colleaguePipette.id}`).set(bearer(s.tokens.otherManager))).status).toBe(404);
      const listed = await t.http.get('/v1/factors').query({ labId: s.labId }).set(bearer(s.tokens.otherManager));
      expect(listed.body.items).toEqual([]);
    });

    it('auditors and administrators read every factor', async () => {
      for (const token of [s.tokens.auditor, s.tokens.admin]) {
        const res = await current({ externalRef: 'DW-ANA-08', assetTag: s.vessels.pipette.assetTag }, token);
        expect(res.status).toBe(200);
        expect(res.body.personId).toBe(s.people.colleague.id);
        expect((await t.http.get(`/v1/factors/${s.factors.lenaBurette.id}`).set(bearer(token))).status).toBe(200);
      }
    });
  });

  describe('registry reads', () => {
    it('one factor with its ETag, 304 when unchanged', async () => {
      const res = await t.http.get(`/v1/factors/${s.factors.lenaBurette.id}`).set(bearer(s.tokens.lena));
      expect(res.status).toBe(200);
      expect(res.headers.etag).toBe(`"${s.factors.lenaBurette.id}-current"`);
      expect(res.body).toMatchObject({
        id: s.factors.lenaBurette.id,
        kind: 'curve',
        state: 'current',
        personId: s.people.lena.id,
        calibrationId: s.factors.lenaBurette.calibrationId,
        reviewRequired: false,
      });
      expect(res.body.curve).toHaveLength(3);
      const again = await t.http
        .get(`/v1/factors/${s.factors.lenaBurette.id}`)
        .set(bearer(s.tokens.lena))
        .set('if-none-match', res.headers.etag as string);
      expect(again.status).toBe(304);
    });

    it('lists with filters and cursor pages', async () => {
      const all: string[] = [];
      let cursor: string | null = null;
      do {
        const res: { status: number; body: { items: { id: string }[]; nextCursor: string | null } } = await t.http
          .get('/v1/factors')
          .query({ personId: s.people.lena.id, state: 'current', limit: 2, ...(cursor ? { cursor } : {}) })
          .set(bearer(s.tokens.manager));
        expect(res.status).toBe(200);
        all.push(...res.body.items.map((f) => f.id));
        cursor = res.body.nextCursor;
      } while (cursor);
      expect(all.sort()).toEqual([s.factors.lenaPipette.id, s.factors.lenaBurette.id, s.factors.lenaQuarantined.id].sort());
      const bad = await t.http.get('/v1/factors').query({ cursor: 'bm90LWEtY3Vyc29y' }).set(bearer(s.tokens.manager));
      expect(bad.status).toBe(400);
      expect((await t.http.get('/v1/factors').query({ state: 'expired' }).set(bearer(s.tokens.manager))).status).toBe(400);
    });
  });
});
