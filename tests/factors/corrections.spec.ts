import { bearer, seedFactor, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { daysAgo, factorScenario, type FactorScenario } from './scenario';

// POST /v1/factors/corrections: a reading corrected with the person's own factor, as a titration program would ask.
describe('corrections', () => {
  let t: TestApp;
  let s: FactorScenario;
  const correct = (body: Record<string, unknown>, key: string = s.keys.correct) =>
    t.http.post('/v1/factors/corrections').set(bearer(key)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    s = await factorScenario(t.database.prisma);
  });
  afterAll(() => t.close());

  it('one-mark ware: nominal × factor, with the factor’s uncertainty', async () => {
    // Lena's pipette: 25 mL × 0.9996 = 24.99 mL; correction −0.01 mL; U = 0.012 mL (k = 2).
    const res = await correct({ email: s.people.lena.email, assetTag: s.vessels.pipette.assetTag, indicatedVolumeMl: '25' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      source: 'factor',
      fallbackFor: null,
      method: 'ratio',
      factorId: s.factors.lenaPipette.id,
      calibrationId: s.factors.lenaPipette.calibrationId,
      personId: s.people.lena.id,
      vesselId: s.vessels.pipette.id,
      indicatedVolumeMl: '25',
      correctionMl: '-0.01',
      correctedVolumeMl: '24.99',
      expandedUncertaintyMl: '0.012',
      coverageFactor: '2',
      referenceTemperatureC: '20',
      between: null,
      atLiquidTemperature: null,
      validUntil: s.factors.lenaPipette.validUntil.toISOString(),
      vesselStatus: 'in-service',
      reviewRequired: false,
    });
    // Her colleague's own factor on the same pipette gives his value: 25 × 1.0004 = 25.01 mL.
    const his = await correct({ externalRef: 'DW-ANA-08', vesselId: s.vessels.pipette.id, indicatedVolumeMl: 25 });
    expect(his.body).toMatchObject({ personId: s.people.colleague.id, correctedVolumeMl: '25.01', expandedUncertaintyMl: '0.015' });
  });

  it('one-mark ware: refuses any volume but the nominal one', async () => {
    const res = await correct({ personId: s.people.lena.id, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '20' });
    expect(res.status).toBe(422);
    expect(res.body).toMatchObject({
      code: 'unprocessable-quantity',
      errors: [{ field: 'indicatedVolumeMl' }],
      validRange: { min: '25', max: '25', unit: 'mL' },
    });
  });

  it('curve: interpolates the correction between the two neighbouring points (hand-computed)', async () => {
    // Points (mL): 10 → c = −0.008 (U 0.010); 25 → c = −0.015 (U 0.014); 50 → c = −0.022 (U 0.020).
    // x = 18.35 lies between 10 and 25:
    //   c = −0.008 + (−0.015 − (−0.008)) × (18.35 − 10) / (25 − 10)
    //     = −0.008 − 0.007 × 8.35 / 15 = −0.008 − 0.00389666… = −0.01189666…
    //   V20 = 18.35 − 0.01189666… = 18.33810333…  (12 significant digits: 18.3381033333)
    //   U = max(0.010, 0.014) = 0.014
    const res = await correct({ personId: s.people.lena.id, assetTag: s.vessels.burette.assetTag, indicatedVolumeMl: '18.35' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      method: 'curve-interpolation',
      correctionMl: '-0.0118966666667',
      correctedVolumeMl: '18.3381033333',
      expandedUncertaintyMl: '0.014',
      between: {
        lower: { nominalVolumeMl: '10', correctionMl: '-0.008', expandedUncertaintyMl: '0.01' },
        upper: { nominalVolumeMl: '25', correctionMl: '-0.015', expandedUncertaintyMl: '0.014' },
      },
    });
    // x = 40 between 25 and 50: c = −0.015 − 0.007 × 15 / 25 = −0.0192; V20 = 39.9808; U = max(0.014, 0.020) = 0.02
    const upper = await correct({ personId: s.people.lena.id, assetTag: s.vessels.burette.assetTag, indicatedVolumeMl: 40 });
    expect(upper.body).toMatchObject({ correctionMl: '-0.0192', correctedVolumeMl: '39.9808', expandedUncertaintyMl: '0.02' });
    // At a calibrated point, that point's own values.
    const point = await correct({ personId: s.people.lena.id, assetTag: s.vessels.burette.assetTag, indicatedVolumeMl: '25' });
    expect(point.body).toMatchObject({ method: 'curve-point', correctedVolumeMl: '24.985', expandedUncertaintyMl: '0.014' });
  });

  it('curve: refuses to extrapolate beyond the calibrated points, naming the range', async () => {
    for (const x of ['5', '50.5']) {
      const res = await correct({ personId: s.people.lena.id, assetTag: s.vessels.burette.assetTag, indicatedVolumeMl: x });
      expect(res.status).toBe(422);
      expect(res.body).toMatchObject({
        code: 'unprocessable-quantity',
        errors: [{ field: 'indicatedVolumeMl' }],
        validRange: { min: '10', max: '50', unit: 'mL' },
      });
      expect(res.body.errors[0].reason).toMatch(/10 to 50 mL/);
    }
  });

  it('liquid temperature: the volume with the glass at that temperature, V_t = V20 × [1 + γ (t − 20)] (hand-computed)', async () => {
    // Burette at 16 mL: c = −0.008 − 0.007 × 6/15 = −0.0108, V20 = 15.9892 mL, U = 0.014 mL.
    // γ = 9.9e-6 /K (borosilicate 3.3), t = 25 °C: 1 + 9.9e-6 × 5 = 1.0000495
    //   V_25 = 15.9892 × 1.0000495 = 15.9892 + 0.0007914654 = 15.9899914654 mL; U = 0.014 × 1.0000495 = 0.014000693 mL
    const res = await correct({
      personId: s.people.lena.id,
      assetTag: s.vessels.burette.assetTag,
      indicatedVolumeMl: '16',
      liquidTemperatureC: '25',
    });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      correctedVolumeMl: '15.9892',
      atLiquidTemperature: {
        liquidTemperatureC: '25',
        expansionCoefficientPerK: '0.0000099',
        expansionFactor: '1.0000495',
        volumeMl: '15.9899914654',
        expandedUncertaintyMl: '0.014000693',
      },
    });
    // Pipette at 15 °C: 1 + 9.9e-6 × (−5) = 0.9999505; 24.99 × 0.9999505 = 24.99 − 0.001237005 = 24.988762995 mL
    const cold = await correct({
      personId: s.people.lena.id,
      vesselId: s.vessels.pipette.id,
      indicatedVolumeMl: '25',
      liquidTemperatureC: 15,
    });
    expect(cold.body.atLiquidTemperature).toMatchObject({ expansionFactor: '0.9999505', volumeMl: '24.988762995' });
    const hot = await correct({
      personId: s.people.lena.id,
      vesselId: s.vessels.pipette.id,
      indicatedVolumeMl: '25',
      liquidTemperatureC: 80,
    });
    expect(hot.status).toBe(422);
    expect(hot.body).toMatchObject({ errors: [{ field: 'liquidTemperatureC' }], validRange: { min: '0', max: '50', unit: '°C' } });
  });

  it('the distinct problems apply to corrections too', async () => {
    const lena = { personId: s.people.lena.id };
    const none = await correct({ personId: s.people.colleague.id, vesselId: s.vessels.burette.id, indicatedVolumeMl: '10' });
    expect(none.body).toMatchObject({ status: 404, code: 'no-factor' });
    const quarantined = await correct({ ...lena, vesselId: s.vessels.quarantined.id, indicatedVolumeMl: '25', allowNominalFallback: true });
    expect(quarantined.body).toMatchObject({ status: 409, code: 'vessel-not-in-service', vesselStatus: 'quarantined' });
    const outsider = await correct({
      email: s.people.outsider.email,
      vesselId: s.vessels.pipette.id,
      indicatedVolumeMl: '25',
      allowNominalFallback: true,
    });
    expect(outsider.body).toMatchObject({ status: 422, code: 'person-not-member' });

    const vessel = await seedVessel(t.database.prisma, s.labId);
    const validUntil = daysAgo(2);
    await seedFactor(t.database.prisma, {
      labId: s.labId,
      ...{ personId: s.people.lena.id },
      vesselId: vessel.id,
      validFrom: daysAgo(400),
      validUntil,
    });
    const expired = await correct({ ...lena, vesselId: vessel.id, indicatedVolumeMl: '25' });
    expect(expired.body).toMatchObject({ status: 409, code: 'factor-expired', validUntil: validUntil.toISOString() });
  });

  it('gives the nominal value with the class limit only when asked, clearly marked', async () => {
    // Tomas has no factor for the burette; its class A limit is ±0.05 mL.
    const res = await correct({
      personId: s.people.colleague.id,
      vesselId: s.vessels.burette.id,
      indicatedVolumeMl: '18.35',
      liquidTemperatureC: '20',
      allowNominalFallback: true,
    });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      source: 'nominal-fallback',
      fallbackFor: { code: 'no-factor' },
      method: 'nominal-fallback',
      factorId: null,
      correctionMl: '0',
      correctedVolumeMl: '18.35',
      expandedUncertaintyMl: '0.05',
      coverageFactor: null,
      atLiquidTemperature: { expansionFactor: '1', volumeMl: '18.35' },
    });
    const refused = await correct({ personId: s.people.colleague.id, vesselId: s.vessels.burette.id, indicatedVolumeMl: '18.35' });
    expect(refused.body.code).toBe('no-factor');
  });

  it('validates the body', async () => {
    const cases: [Record<string, unknown>, string][] = [
      [{ personId: s.people.lena.id, vesselId: s.vessels.pipette.id }, 'indicatedVolumeMl'],
      [{ personId: s.people.lena.id, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '0' }, 'indicatedVolumeMl'],
      [{ personId: s.people.lena.id, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '1,5' }, 'indicatedVolumeMl'],
      [{ vesselId: s.vessels.pipette.id, indicatedVolumeMl: '25' }, 'personId'],
      [{ personId: s.people.lena.id, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '25', extra: 1 }, 'extra'],
      [
        { personId: s.people.lena.id, vesselId: s.vessels.pipette.id, indicatedVolumeMl: '25', allowNominalFallback: 'yes' },
        'allowNominalFallback',
      ],
    ];
    for (const [body, field] of cases) {
      const res = await correct(body);
      expect(res.status).toBe(400);
      expect(res.body.errors.map((e: { field: string }) => e.field)).toContain(field);
    }
  });
});
