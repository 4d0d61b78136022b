import { expectNear, expectQuantitiesAsStrings } from '../calculations/helpers';
import { bearer, seedBalance, seedCast, seedCheckWeight, seedCredential } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const DAY = 86_400_000;
const aluminium = { readingG: '2.000000', objectDensityKgPerM3: 2700, airDensityKgPerM3: '1.2' };

// Buoyancy corrections of readings on a named balance: its adjustment-weight density, its minimum weight,
// and whether a reading from it may be corrected as traceable at all.
describe('POST /v1/balances/:balanceId/weighing-corrections', () => {
  let t: TestApp;
  let cast: Cast;
  /** An analytical balance in service, externally calibrated until next year, minimum weight 82 mg (820 d). */
  const calibrated = (overrides: Parameters<typeof seedBalance>[2] = {}) =>
    seedBalance(t.database.prisma, cast.lab.id, {
      externalCalibrationDate: new Date(Date.now() - 100 * DAY),
      externalCalibrationDue: new Date(Date.now() + 265 * DAY),
      minimumWeightG: '0.082',
      minimumWeightDeterminedAt: new Date(Date.now() - 2 * DAY),
      ...overrides,
    });
  const correct = (balanceId: string, body: Record<string, unknown>, token = cast.tokens.analyst) =>
    t.http.post(`/v1/balances/${balanceId}/weighing-corrections`).set(bearer(token)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  // Worked example in a precision balance's operating instructions (manualshelf.com, section 3-6), cited by
  // libs/metrology/src/buoyancy.spec.ts: aluminium 2.7 g/cm3, reading 2000.000 mg -> 2000.589 mg in air of
  // 1.2 kg/m3 on a balance adjusted with 8000 kg/m3 weights. Tolerance 0.0005 mg = 5e-7 g: the example's last digit.
  it('reproduces the published aluminium example with the balance’s 8000 kg/m3 adjustment weights', async () => {
    const balance = await calibrated();
    const res = await correct(balance.id, aluminium).expect(200);
    expectNear(res.body.trueMassG, '2.000589', 5e-7);
    expectNear(res.body.correctionG, '0.000589', 5e-7);
    // OIML D 28: conventional mass is what 8000 kg/m3 weights balance in air of 1.2 kg/m3, i.e. this very reading.
    expect(res.body).toMatchObject({
      conventionalMassG: '2',
      readingG: '2',
      airDensityKgPerM3: '1.2',
      airDensitySource: 'given',
      adjustmentWeightDensityKgPerM3: '8000',
      balance: { id: balance.id, status: 'in-service', minimumWeightG: '0.082' },
    });
    expect(res.body.warnings.map((w: { code: string }) => w.code)).toEqual(['no-recent-passing-check']);
    expectQuantitiesAsStrings(res.body);
  });

  it('uses the balance’s own adjustment-weight density: none needed for an object of that density', async () => {
    const balance = await calibrated({ adjustmentWeightDensityKgPerM3: '7950' });
    const res = await correct(balance.id, { readingG: '50.0000', objectDensityKgPerM3: '7950', airDensityKgPerM3: '1.17' }).expect(200);
    expect(res.body).toMatchObject({ trueMassG: '50', correctionG: '0', factor: '1', adjustmentWeightDensityKgPerM3: '7950' });
  });

  it('warns, and still corrects, a reading below the minimum weight or on a balance without one', async () => {
    const balance = await calibrated();
    const below = await correct(balance.id, { readingG: '0.0500', objectDensityKgPerM3: '1636', airDensityKgPerM3: '1.166' }).expect(200);
    expect(below.body.warnings).toContainEqual({
      code: 'below-minimum-weight',
      field: 'readingG',
      message: expect.stringContaining('0.082 g'),
    });
    expect(below.body.trueMassG).toEqual(expect.any(String));
    const above = await correct(balance.id, { readingG: '0.40842', objectDensityKgPerM3: '1636', airDensityKgPerM3: '1.166' }).expect(200);
    expect(above.body.warnings.map((w: { code: string }) => w.code)).not.toContain('below-minimum-weight');
    const unknown = await calibrated({ minimumWeightG: null, minimumWeightDeterminedAt: null });
    const res = await correct(unknown.id, aluminium).expect(200);
    expect(res.body.warnings.map((w: { code: string }) => w.code)).toContain('minimum-weight-unknown');
  });

  it('computes the air density from the room conditions', async () => {
    const balance = await calibrated();
    const airConditions = { temperatureC: '21.8', pressurePa: '98650', relativeHumidityPercent: '41' };
    const res = await correct(balance.id, { readingG: '0.40842', objectDensityKgPerM3: '1636', airConditions }).expect(200);
    expect(res.body.airDensitySource).toBe('cipm-2007');
    expectNear(res.body.airDensityKgPerM3, '1.16', 0.01);
    await correct(balance.id, { readingG: '1', objectDensityKgPerM3: '1636', airConditions, airDensityKgPerM3: '1.2' }).expect(400);
    await correct(balance.id, { readingG: '1', objectDensityKgPerM3: '1636' }).expect(400);
  });

  it('refuses readings from a quarantined or retired balance, or one whose external calibration is overdue or missing', async () => {
    const quarantined = await calibrated({ status: 'quarantined' });
    const q = await correct(quarantined.id, aluminium).expect(422);
    expect(q.body).toMatchObject({ code: 'traceability-violation', violations: [{ rule: 'balance-in-service', itemId: quarantined.id }] });
    const retired = await calibrated({ status: 'retired' });
    expect((await correct(retired.id, aluminium).expect(422)).body.violations[0].rule).toBe('balance-in-service');
    const overdue = await calibrated({
      externalCalibrationDate: new Date(Date.now() - 400 * DAY),
      externalCalibrationDue: new Date(Date.now() - 2 * DAY),
    });
    const o = await correct(overdue.id, aluminium).expect(422);
    expect(o.body.violations).toEqual([
      expect.objectContaining({ rule: 'balance-calibration-current', detail: expect.stringMatching(/was due on/) }),
    ]);
    const never = await calibrated({ externalCalibrationDate: null, externalCalibrationDue: null });
    expect((await correct(never.id, aluminium).expect(422)).body.violations[0].rule).toBe('balance-calibration-current');
  });

  it('is open to readers of the lab and to credentials with corrections:write for it', async () => {
    const balance = await calibrated();
    await correct(balance.id, aluminium, cast.tokens.manager).expect(200);
    await correct(balance.id, aluminium, cast.tokens.auditor).expect(200);
    await correct(balance.id, aluminium, cast.tokens.otherManager).expect(404);
    const writer = await seedCredential(t.database.prisma, cast.people.admin.id, ['corrections:write'], [cast.lab.id]);
    await correct(balance.id, aluminium, writer.key).expect(200);
    const elsewhere = await seedCredential(t.database.prisma, cast.people.admin.id, ['corrections:write'], [cast.otherLab.id]);
    await correct(balance.id, aluminium, elsewhere.key).expect(404);
    const reader = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.lab.id]);
    await correct(balance.id, aluminium, reader.key).expect(403);
  });

  it('no longer warns about the routine check once a passing one is recorded within the lab’s window', async () => {
    const balance = await calibrated();
    const weight = await seedCheckWeight(t.database.prisma, cast.lab.id);
    await t.http
      .post(`/v1/balances/${balance.id}/checks`)
      .set(bearer(cast.tokens.analyst))
      .send({ kind: 'quick', referenceWeightId: weight.id, readingsG: ['100.0000'], limitG: '0.0003' })
      .expect(201);
    const res = await correct(balance.id, aluminium).expect(200);
    expect(res.body.warnings).toEqual([]);
  });
});
