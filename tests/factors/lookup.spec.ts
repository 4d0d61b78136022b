import { bearer, seedFactor, seedPerson, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { daysAgo, daysAhead, factorScenario, type FactorScenario } from './scenario';

// GET /v1/factors/current: what another system (or the analyst) fetches before using a vessel.
describe('current factor lookup', () => {
  let t: TestApp;
  let s: FactorScenario;
  const current = (query: Record<string, string | undefined>, key: string = s.keys.read) =>
    t.http.get('/v1/factors/current').query(query).set(bearer(key));

  beforeAll(async () => {
    t = await startTestApp();
    s = await factorScenario(t.database.prisma);
  });
  afterAll(() => t.close());

  it('finds the person’s own factor by ids, by asset tag and email, and by asset tag and the lab’s external reference', async () => {
    const { lena } = s.people;
    const { pipette } = s.vessels;
    const forms: Record<string, string>[] = [
      { personId: lena.id, vesselId: pipette.id },
      { email: lena.email.toUpperCase(), assetTag: pipette.assetTag },
      { externalRef: 'DW-ANA-07', assetTag: pipette.assetTag },
      { externalRef: 'DW-ANA-07', vesselId: pipette.id },
    ];
    for (const query of forms) {
      const res = await current(query);
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({
        source: 'factor',
        fallbackFor: null,
        factorId: s.factors.lenaPipette.id,
        state: 'current',
        kind: 'single',
        personId: lena.id,
        vesselId: pipette.id,
        labId: s.labId,
        nominalVolumeMl: '25',
        factor: '0.9996',
        correctionMl: '-0.01',
        curve: null,
        expandedUncertaintyMl: '0.012',
        coverageFactor: '2',
        referenceTemperatureC: '20',
        calibrationId: s.factors.lenaPipette.calibrationId,
        vesselStatus: 'in-service',
        reviewRequired: false,
        validFrom: s.factors.lenaPipette.validFrom.toISOString(),
        validUntil: s.factors.lenaPipette.validUntil.toISOString(),
      });
    }
  });

  it('never mixes up two people’s factors on the same vessel, nor an external reference of another lab', async () => {
    const res = await current({ externalRef: 'DW-ANA-08', assetTag: s.vessels.pipette.assetTag });
    expect(res.body).toMatchObject({ factorId: s.factors.colleaguePipette.id, personId: s.people.colleague.id, factor: '1.0004' });
    // The wastewater analyst carries DW-ANA-07 in her own lab; on this lab's vessel it names Lena.
    const lena = await current({ externalRef: 'DW-ANA-07', assetTag: s.vessels.pipette.assetTag });
    expect(lena.body.personId).toBe(s.people.lena.id);
  });

  it('returns a correction curve for graduated ware', async () => {
    const res = await current({ personId: s.people.lena.id, assetTag: s.vessels.burette.assetTag });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ kind: 'curve', correctionMl: null, expandedUncertaintyMl: '0.02', nominalVolumeMl: '50' });
    expect(res.body.curve).toEqual([
      { nominalVolumeMl: '10', meanVolumeMl: '9.992', correctionMl: '-0.008', expandedUncertaintyMl: '0.01' },
      { nominalVolumeMl: '25', meanVolumeMl: '24.985', correctionMl: '-0.015', expandedUncertaintyMl: '0.014' },
      { nominalVolumeMl: '50', meanVolumeMl: '49.978', correctionMl: '-0.022', expandedUncertaintyMl: '0.02' },
    ]);
  });

  it('sends a strong ETag of the factor id and state with Cache-Control, and 304 to a caller who holds it', async () => {
    const query = { personId: s.people.lena.id, vesselId: s.vessels.pipette.id };
    const first = await current(query);
    const etag = `"${s.factors.lenaPipette.id}-current"`;
    expect(first.headers.etag).toBe(etag);
    expect(first.headers['cache-control']).toBe('private, max-age=60, must-revalidate');
    const again = await current(query).set('if-none-match', etag);
    expect(again.status).toBe(304);
    expect(again.text).toBe('');
    expect(again.headers.etag).toBe(etag);
    expect(again.headers['cache-control']).toBe('private, max-age=60, must-revalidate');
    expect((await current(query).set('if-none-match', `"stale", W/${etag}`)).status).toBe(304);
    expect((await current(query).set('if-none-match', '"something-else"')).status).toBe(200);
  });

  it('changes the ETag when the factor is marked for review, and flags it in the answer', async () => {
    const vessel = await seedVessel(t.database.prisma, s.labId);
    const factor = await seedFactor(t.database.prisma, { labId: s.labId, personId: s.people.lena.id, vesselId: vessel.id });
    const query = { personId: s.people.lena.id, vesselId: vessel.id };
    const before = await current(query);
    await t.database.prisma.factor.update({
      where: { id: factor.id },
      data: { reviewRequiredAt: new Date(), reviewReason: 'Balance BAL-07 failed its daily check' },
    });
    const after = await current(query).set('if-none-match', before.headers.etag as string);
    expect(after.status).toBe(200);
    expect(after.headers.etag).toBe(`"${factor.id}-current-review"`);
    expect(after.body).toMatchObject({ reviewRequired: true, reviewReason: 'Balance BAL-07 failed its daily check' });
  });

  describe('at an instant', () => {
    // Lena's first calibration of this pipette was issued 199 days ago; her recalibration, performed 12 days ago,
    // was approved 10 days ago and superseded the first at that moment.
    let vesselId: string;
    let first: { id: string };
    let second: { id: string };
    beforeAll(async () => {
      const prisma = t.database.prisma;
      const vessel = await seedVessel(prisma, s.labId);
      vesselId = vessel.id;
      const approvedAgain = daysAgo(10);
      first = await seedFactor(prisma, {
        labId: s.labId,
        personId: s.people.lena.id,
        vesselId,
        factor: '0.9992',
        correctionMl: '-0.02',
        validFrom: daysAgo(200),
        createdAt: daysAgo(199),
        validUntil: daysAhead(165),
        state: 'superseded',
        endedAt: approvedAgain,
      });
      second = await seedFactor(prisma, {
        labId: s.labId,
        personId: s.people.lena.id,
        vesselId,
        validFrom: daysAgo(12),
        createdAt: approvedAgain,
      });
    });

    it('returns the superseded factor that was in force then, and the new one after its approval', async () => {
      const at = (d: Date) => current({ personId: s.people.lena.id, vesselId, at: d.toISOString() });
      const now = await current({ personId: s.people.lena.id, vesselId });
      expect(now.body).toMatchObject({ factorId: second.id, state: 'current' });

      const fiftyDaysAgo = await at(daysAgo(50));
      expect(fiftyDaysAgo.status).toBe(200);
      expect(fiftyDaysAgo.body).toMatchObject({ factorId: first.id, state: 'superseded', factor: '0.9992', correctionMl: '-0.02' });
      expect(fiftyDaysAgo.headers.etag).toBe(`"${first.id}-superseded"`);
      // Performed 12 days ago but approved only 10 days ago: 11 days ago the first factor was still the one in use.
      expect((await at(daysAgo(11))).body.factorId).toBe(first.id);
      expect((await at(daysAgo(9))).body.factorId).toBe(second.id);
    });

    it('says no factor was in force before the first calibration, and refuses an instant in the future', async () => {
      const before = await current({ personId: s.people.lena.id, vesselId, at: daysAgo(300).toISOString() });
      expect(before.status).toBe(404);
      expect(before.body).toMatchObject({ code: 'no-factor' });
      expect(before.body.detail).toMatch(/in force at/);
      const future = await current({ personId: s.people.lena.id, vesselId, at: daysAhead(1).toISOString() });
      expect(future.status).toBe(400);
      expect(future.body.errors).toEqual([{ field: 'at', reason: 'must not be in the future' }]);
    });

    it('answers about the past even when the vessel has since been retired', async () => {
      const prisma = t.database.prisma;
      const vessel = await seedVessel(prisma, s.labId);
      const factor = await seedFactor(prisma, { labId: s.labId, personId: s.people.lena.id, vesselId: vessel.id, createdAt: daysAgo(20) });
      await prisma.vessel.update({ where: { id: vessel.id }, data: { status: 'retired' } });
      const res = await current({ personId: s.people.lena.id, vesselId: vessel.id, at: daysAgo(5).toISOString() });
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ factorId: factor.id, vesselStatus: 'retired' });
      expect(res.headers.etag).toBe(`"${factor.id}-current-retired"`);
    });
  });

  describe('distinct problems', () => {
    it('no-factor: no calibration on record for this person and vessel', async () => {
      const res = await current({ personId: s.people.colleague.id, vesselId: s.vessels.burette.id });
      expect(res.status).toBe(404);
      expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
      expect(res.body).toMatchObject({
        code: 'no-factor',
        type: '/problems/no-factor',
        personId: s.people.colleague.id,
        vesselId: s.vessels.burette.id,
      });
    });

    it('factor-expired: names the date the factor ended', async () => {
      const vessel = await seedVessel(t.database.prisma, s.labId);
      const validUntil = daysAgo(3);
      const factor = await seedFactor(t.database.prisma, {
        labId: s.labId,
        personId: s.people.lena.id,
        vesselId: vessel.id,
        validFrom: daysAgo(368),
        validUntil,
      });
      const res = await current({ personId: s.people.lena.id, vesselId: vessel.id });
      expect(res.status).toBe(409);
      expect(res.body).toMatchObject({ code: 'factor-expired', validUntil: validUntil.toISOString(), factorId: factor.id });
      expect(res.body.detail).toContain(validUntil.toISOString());
    });

    it('vessel-not-in-service: a quarantined vessel has no usable factor, fallback or not', async () => {
      for (const query of [{}, { fallback: 'nominal' }]) {
        const res = await current({ personId: s.people.lena.id, vesselId: s.vessels.quarantined.id, ...query });
        expect(res.status).toBe(409);
        expect(res.body).toMatchObject({ code: 'vessel-not-in-service', vesselStatus: 'quarantined' });
      }
    });

    it('person-not-active: a disabled person’s factors are not used now, fallback or not, but answer for the past', async () => {
      const prisma = t.database.prisma;
      const leaver = await seedPerson(prisma, { labs: [{ labId: s.labId, role: 'analyst' }] });
      const vessel = await seedVessel(prisma, s.labId);
      await seedFactor(prisma, { labId: s.labId, personId: leaver.id, vesselId: vessel.id, validFrom: daysAgo(30) });
      expect((await current({ personId: leaver.id, vesselId: vessel.id })).status).toBe(200);
      const whileActive = new Date();
      await prisma.person.update({ where: { id: leaver.id }, data: { status: 'disabled' } });
      for (const query of [{}, { fallback: 'nominal' }]) {
        const res = await current({ email: leaver.email, vesselId: vessel.id, ...query });
        expect(res.status).toBe(409);
        expect(res.body).toMatchObject({ code: 'person-not-active', personId: leaver.id, vesselId: vessel.id });
      }
      const past = await current({ personId: leaver.id, vesselId: vessel.id, at: whileActive.toISOString() });
      expect(past.status).toBe(200);
      expect(past.body.personId).toBe(leaver.id);
    });

    it('person-not-member: a person of another lab, or an email nobody has, fallback or not', async () => {
      for (const person of [
        { email: s.people.outsider.email },
        { personId: s.people.outsider.id },
        { email: 'nobody@waterworks.example' },
      ]) {
        for (const query of [{}, { fallback: 'nominal' }]) {
          const res = await current({ ...person, vesselId: s.vessels.pipette.id, ...query });
          expect(res.status).toBe(422);
          expect(res.body).toMatchObject({ code: 'person-not-member', vesselId: s.vessels.pipette.id });
        }
      }
      const unknownRef = await current({ externalRef: 'DW-ANA-99', assetTag: s.vessels.pipette.assetTag });
      expect(unknownRef.body).toMatchObject({ code: 'person-not-member', errors: [{ field: 'externalRef' }] });
    });

    it('not-found: no such vessel', async () => {
      const res = await current({ personId: s.people.lena.id, assetTag: 'NO-SUCH-TAG' });
      expect(res.status).toBe(404);
      expect(res.body.code).toBe('not-found');
    });

    it('validation: exactly one identifier for the person and one for the vessel', async () => {
      const both = await current({ personId: s.people.lena.id, email: s.people.lena.email, vesselId: s.vessels.pipette.id });
      expect(both.status).toBe(400);
      expect(both.body.errors).toEqual([{ field: 'email', reason: 'name the person by exactly one of personId, email, externalRef' }]);
      const none = await current({ personId: s.people.lena.id });
      expect(none.body.errors).toEqual([{ field: 'vesselId', reason: 'name the vessel by exactly one of vesselId, assetTag' }]);
      expect((await current({ personId: 'x', vesselId: s.vessels.pipette.id })).status).toBe(400);
    });
  });

  describe('explicit nominal fallback', () => {
    it('answers the nominal value with the class limit as its uncertainty, clearly marked and never cached', async () => {
      const res = await current({ personId: s.people.colleague.id, vesselId: s.vessels.burette.id, fallback: 'nominal' });
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({
        source: 'nominal-fallback',
        fallbackFor: { code: 'no-factor', validUntil: null },
        factorId: null,
        calibrationId: null,
        personId: s.people.colleague.id,
        factor: '1',
        correctionMl: '0',
        expandedUncertaintyMl: '0.05',
        coverageFactor: null,
      });
      expect(res.headers.etag).toBeUndefined();
      expect(res.headers['cache-control']).toBe('no-store');
    });

    it('stands in for an expired factor, naming its end', async () => {
      const vessel = await seedVessel(t.database.prisma, s.labId);
      const validUntil = daysAgo(1);
      await seedFactor(t.database.prisma, {
        labId: s.labId,
        personId: s.people.lena.id,
        vesselId: vessel.id,
        validFrom: daysAgo(366),
        validUntil,
      });
      const res = await current({ personId: s.people.lena.id, vesselId: vessel.id, fallback: 'nominal' });
      expect(res.body).toMatchObject({
        source: 'nominal-fallback',
        fallbackFor: { code: 'factor-expired', validUntil: validUntil.toISOString() },
        expandedUncertaintyMl: '0.03',
      });
    });

    it('is refused (with the original problem) when the vessel has no acceptance limit', async () => {
      const vessel = await seedVessel(t.database.prisma, s.labId, { limitMl: null, limitSource: 'none' });
      const res = await current({ personId: s.people.lena.id, vesselId: vessel.id, fallback: 'nominal' });
      expect(res.status).toBe(404);
      expect(res.body).toMatchObject({ code: 'no-factor' });
      expect(res.body.fallbackRefused).toMatch(/no acceptance limit/);
    });
  });
});
