import { bearer, seedBalance, seedCast, seedCredential, seedInstrument, seedReferenceWeight } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

// Balances, reference weights and environment instruments share the inventory
// rules; vessels have their own spec (inventory-vessels.spec.ts).
describe('balances, reference weights and instruments', () => {
  let t: TestApp;
  let cast: Cast;
  const post = (path: string, body: Record<string, unknown>, token = cast.tokens.manager) =>
    t.http
      .post(path)
      .set(bearer(token))
      .send({ labId: cast.lab.id, ...body });
  const patch = (path: string, body: Record<string, unknown>, token = cast.tokens.manager, ifMatch = '"v1"') =>
    t.http.patch(path).set(bearer(token)).set('if-match', ifMatch).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  describe('balances', () => {
    it('registers a balance with the conventional adjustment-weight density and its external calibration', async () => {
      const res = await post('/v1/balances', {
        assetTag: 'BAL-02',
        model: 'Analytical balance 220 g / 0.1 mg',
        capacityG: 220,
        readabilityG: '0.0001',
        externalCalibrationDate: '2026-01-14',
        externalCalibrationCertificate: 'DKD-K-0815/2026-0113',
        externalCalibrationProvider: 'Regional calibration service',
        externalCalibrationDue: '2027-01-14',
      }).expect(201);
      expect(res.headers.etag).toBe('"v1"');
      expect(res.body).toMatchObject({
        assetTag: 'BAL-02',
        capacityG: '220',
        readabilityG: '0.0001',
        adjustmentWeightDensityKgPerM3: '8000',
        externalCalibrationDate: '2026-01-14',
        externalCalibrationDue: '2027-01-14',
        minimumWeightG: null,
        status: 'in-service',
        version: 1,
      });
      await post('/v1/balances', { assetTag: 'BAL-02', capacityG: 220, readabilityG: '0.001' }).expect(409);
    });

    it('refuses a readability not below the capacity, a due date before the calibration and a density out of range', async () => {
      const r1 = await post('/v1/balances', { assetTag: 'BAL-90', capacityG: 1, readabilityG: 2 }).expect(400);
      expect(r1.body.errors[0].field).toBe('readabilityG');
      const r2 = await post('/v1/balances', {
        assetTag: 'BAL-91',
        capacityG: 220,
        readabilityG: 0.001,
        externalCalibrationDate: '2026-01-14',
        externalCalibrationDue: '2026-01-14',
      }).expect(400);
      expect(r2.body.errors[0].field).toBe('externalCalibrationDue');
      await post('/v1/balances', { assetTag: 'BAL-92', capacityG: 220, readabilityG: 0.001, adjustmentWeightDensityKgPerM3: 1000 }).expect(
        400,
      );
      await post('/v1/balances', { assetTag: 'BAL-93', capacityG: 220, readabilityG: 0.001, externalCalibrationDue: '2026-02-30' }).expect(
        400,
      );
    });

    it('keeps the minimum weight read-only here', async () => {
      const b = await seedBalance(t.database.prisma, cast.lab.id);
      const res = await patch(`/v1/balances/${b.id}`, { minimumWeightG: '0.01' }).expect(400);
      expect(res.body.code).toBe('validation-failed');
    });

    it('records a new external calibration, checked against the stored dates', async () => {
      const b = await seedBalance(t.database.prisma, cast.lab.id, { externalCalibrationDate: new Date('2026-01-14T00:00:00Z') });
      await patch(`/v1/balances/${b.id}`, { externalCalibrationDue: '2025-12-31' }).expect(400);
      const res = await patch(`/v1/balances/${b.id}`, {
        externalCalibrationDue: '2027-01-14',
        externalCalibrationCertificate: 'K-2026-0113',
      }).expect(200);
      expect(res.body).toMatchObject({ externalCalibrationDue: '2027-01-14', externalCalibrationCertificate: 'K-2026-0113', version: 2 });
      const entry = await t.database.prisma.auditEntry.findFirstOrThrow({
        where: { entityType: 'balance', entityId: b.id, action: 'update' },
      });
      expect(entry.oldValues).toEqual({ externalCalibrationCertificate: null, externalCalibrationDue: null, version: 1 });
      expect(entry.newValues).toEqual({ externalCalibrationCertificate: 'K-2026-0113', externalCalibrationDue: '2027-01-14', version: 2 });
    });

    it('applies the property rules: analysts move it, managers quarantine it with a reason', async () => {
      const b = await seedBalance(t.database.prisma, cast.lab.id);
      await patch(`/v1/balances/${b.id}`, { location: 'Weighing room 2.12' }, cast.tokens.analyst).expect(200);
      const refused = await patch(`/v1/balances/${b.id}`, { capacityG: 300 }, cast.tokens.analyst, '"v2"').expect(403);
      expect(refused.body.errors).toEqual([expect.objectContaining({ field: 'capacityG' })]);
      await patch(`/v1/balances/${b.id}`, { status: 'quarantined' }, cast.tokens.manager, '"v2"').expect(400);
      await patch(
        `/v1/balances/${b.id}`,
        { status: 'quarantined', reason: 'Moved: level and adjust before use' },
        cast.tokens.manager,
        '"v2"',
      ).expect(200);
      await patch(`/v1/balances/${b.id}`, { notes: 'x' }, cast.tokens.auditor, '"v3"').expect(403);
      await patch(`/v1/balances/${b.id}`, { notes: 'x' }, cast.tokens.otherManager, '"v3"').expect(404);
      await patch(`/v1/balances/${b.id}`, { notes: 'x' }, cast.tokens.manager).expect(412);
      await t.http.patch(`/v1/balances/${b.id}`).set(bearer(cast.tokens.manager)).send({ notes: 'x' }).expect(428);
    });
  });

  describe('reference weights', () => {
    it('registers a check weight with its certificate values', async () => {
      const res = await post('/v1/reference-weights', {
        assetTag: 'CW-F1-100G-1',
        nominalMassG: 100,
        oimlClass: 'F1',
        conventionalMassG: '100.00012',
        expandedUncertaintyG: '0.00005',
        densityKgPerM3: 7950,
        certificateNumber: 'MW-2026-0331',
        certificateDue: '2028-03-31',
      }).expect(201);
      expect(res.body).toMatchObject({
        nominalMassG: '100',
        oimlClass: 'F1',
        conventionalMassG: '100.00012',
        expandedUncertaintyG: '0.00005',
        densityKgPerM3: '7950',
        certificateDue: '2028-03-31',
      });
      const stored = await t.database.prisma.referenceWeight.findUniqueOrThrow({ where: { id: res.body.id } });
      expect(stored.uncertaintyG?.toFixed()).toBe('0.00005');
    });

    it('refuses an unknown class and more decimals than the certificate column holds', async () => {
      await post('/v1/reference-weights', { assetTag: 'CW-X1', nominalMassG: 100, oimlClass: 'F3' }).expect(400);
      const res = await post('/v1/reference-weights', {
        assetTag: 'CW-X2',
        nominalMassG: 100,
        oimlClass: 'F1',
        conventionalMassG: '100.0000000001',
      }).expect(400);
      expect(res.body.errors[0]).toMatchObject({ field: 'conventionalMassG', reason: expect.stringMatching(/decimal places/) });
    });

    it('updates certificate values and clears optional ones', async () => {
      const w = await seedReferenceWeight(t.database.prisma, cast.lab.id, { densityKgPerM3: '7950' });
      const res = await patch(`/v1/reference-weights/${w.id}`, { expandedUncertaintyG: '0.00006', densityKgPerM3: null }).expect(200);
      expect(res.body).toMatchObject({ expandedUncertaintyG: '0.00006', densityKgPerM3: null, version: 2 });
      await patch(`/v1/reference-weights/${w.id}`, { oimlClass: 'E2' }, cast.tokens.analyst, '"v2"').expect(403);
    });
  });

  describe('instruments', () => {
    it('registers a thermohygrometer with its two uncertainties, each in its unit', async () => {
      const res = await post('/v1/instruments', {
        assetTag: 'THG-03',
        kind: 'thermohygrometer',
        temperatureUncertaintyK: '0.3',
        humidityUncertaintyPercent: 2,
        calibrationDate: '2026-02-03',
        certificateNumber: 'TH-2026-0207',
        calibrationDue: '2027-02-03',
      }).expect(201);
      expect(res.body).toMatchObject({
        kind: 'thermohygrometer',
        temperatureUncertaintyK: '0.3',
        humidityUncertaintyPercent: '2',
        pressureUncertaintyPa: null,
      });
    });

    it('refuses an uncertainty of a quantity the kind does not measure, also after a change of kind', async () => {
      const res = await post('/v1/instruments', { assetTag: 'TH-99', kind: 'thermometer', pressureUncertaintyPa: 50 }).expect(400);
      expect(res.body.errors).toEqual([expect.objectContaining({ field: 'pressureUncertaintyPa' })]);
      const i = await seedInstrument(t.database.prisma, cast.lab.id, { temperatureUncertaintyK: '0.05' });
      const change = await patch(`/v1/instruments/${i.id}`, { kind: 'barometer' }).expect(400);
      expect(change.body.errors).toEqual([expect.objectContaining({ field: 'temperatureUncertaintyK' })]);
      await patch(`/v1/instruments/${i.id}`, { kind: 'barometer', temperatureUncertaintyK: null, pressureUncertaintyPa: 50 }).expect(200);
    });

    it('is readable by credentials with inventory:read for the lab only', async () => {
      const i = await seedInstrument(t.database.prisma, cast.lab.id);
      const inLab = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.lab.id]);
      const outOfLab = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.otherLab.id]);
      const noScope = await seedCredential(t.database.prisma, cast.people.admin.id, ['factors:read'], [cast.lab.id]);
      await t.http.get(`/v1/instruments/${i.id}`).set(bearer(inLab.key)).expect(200);
      await t.http.get(`/v1/instruments/${i.id}`).set(bearer(outOfLab.key)).expect(404);
      await t.http.get(`/v1/instruments/${i.id}`).set(bearer(noScope.key)).expect(403);
      await t.http
        .post('/v1/instruments')
        .set(bearer(inLab.key))
        .send({ labId: cast.lab.id, assetTag: 'TH-98', kind: 'thermometer' })
        .expect(403);
    });
  });

  describe('calibration dates', () => {
    /** The calendar date in UTC+14, the easternmost zone: the latest date that is today somewhere. */
    const easternmostToday = () => new Date(Date.now() + 14 * 3_600_000).toISOString().slice(0, 10);
    const dayAfter = (d: string) => new Date(Date.parse(`${d}T00:00:00Z`) + 86_400_000).toISOString().slice(0, 10);

    it.each([
      ['/v1/balances', 'externalCalibrationDate', { capacityG: 220, readabilityG: '0.0001' }],
      ['/v1/instruments', 'calibrationDate', { kind: 'thermometer' }],
    ] as const)('%s refuses %s in the future on registration and on change, and takes today anywhere', async (path, field, rest) => {
      const tag = (n: number) => `FUT-${field.length}-${n}`;
      const future = await post(path, { assetTag: tag(1), ...rest, [field]: '9999-12-30' }).expect(400);
      expect(future.body.errors).toEqual([{ field, reason: 'must not be in the future' }]);
      await post(path, { assetTag: tag(2), ...rest, [field]: dayAfter(easternmostToday()) }).expect(400);
      const today = await post(path, { assetTag: tag(3), ...rest, [field]: easternmostToday() }).expect(201);
      expect(today.body[field]).toBe(easternmostToday());
      const later = await patch(`${path}/${today.body.id}`, { [field]: '2999-01-01' }).expect(400);
      expect(later.body.errors).toEqual([{ field, reason: 'must not be in the future' }]);
      // Nothing was written by the refused requests.
      expect((await t.http.get(`${path}/${today.body.id}`).set(bearer(cast.tokens.manager)).expect(200)).body).toMatchObject({
        [field]: easternmostToday(),
        version: 1,
      });
      expect((await t.http.get(path).set(bearer(cast.tokens.manager)).query({ q: 'FUT-' })).body.items).toHaveLength(1);
    });
  });
});
