import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, expectNear, expectQuantitiesAsStrings, signedIn } from './helpers';

const MMHG_PA = '133.322387415'; // exact by definition (libs/metrology units.ts)

describe('POST /v1/calculations/water-density', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  // Tanaka et al. (2001), Metrologia 38, 301, recommended table (4 decimals), as transcribed in the public
  // test suite ucnl/UCNLPhysics; tolerance half a unit in the last place (same source as the library spec).
  it.each([
    [20, '998.2067'],
    [25, '997.0470'],
    [4, '999.9749'],
  ])('matches the Tanaka 2001 table at %s °C', async (temperatureC, expected) => {
    const res = await c.post('water-density', { temperatureC }).expect(200);
    expectNear(res.body.densityKgPerM3, expected, 0.00005);
    expect(res.body).toMatchObject({ method: 'tanaka-2001', pressurePa: '101325', airSaturated: false, warnings: [] });
    expectQuantitiesAsStrings(res.body);
  });

  // Air saturation constants s0 = -4.612e-3, s1 = 0.106e-3 (Tanaka 2001 as quoted on metgen.pagesperso-orange.fr):
  // at 20 °C the correction is -2.492e-3 kg/m3 exactly.
  it('applies the air-saturation correction and warns near the range limit', async () => {
    const res = await c.post('water-density', { temperatureC: '20', airSaturated: true }).expect(200);
    expect(res.body.terms.airSaturationCorrectionKgPerM3).toBe('-0.002492');
    const near = await c.post('water-density', { temperatureC: '39.8' }).expect(200);
    expect(near.body.warnings).toEqual([expect.objectContaining({ code: 'near-validity-limit', field: 'temperatureC' })]);
  });

  it('gives the same answer for a number, a decimal string and an exponent string', async () => {
    const bodies = [{ temperatureC: 20 }, { temperatureC: '20' }, { temperatureC: '2.0e1' }, { temperatureC: '20.000' }];
    const answers = await Promise.all(bodies.map((b) => c.post('water-density', b).expect(200)));
    expect(new Set(answers.map((a) => a.body.densityKgPerM3)).size).toBe(1);
  });
});

describe('POST /v1/calculations/air-density', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  // CIPM-2007 at 20 °C, 101325 Pa, 50 %, xCO2 0.0004: 1.199314 kg/m3, the result of the independent implementation
  // in the CRAN package masscor (its vignette); tolerance 1e-6 kg/m3 (7 significant digits printed).
  it('agrees with an independent CIPM-2007 implementation at 20 °C, 101325 Pa, 50 %', async () => {
    const res = await c.post('air-density', { temperatureC: '20', pressurePa: '101325', relativeHumidityPercent: '50' }).expect(200);
    expectNear(res.body.densityKgPerM3, '1.199314', 1e-6);
    expect(res.body).toMatchObject({ method: 'cipm-2007', co2MoleFraction: '0.0004', warnings: [] });
    // f = 1.00062 + 3.14e-8 p + 5.6e-7 t^2: exact arithmetic on the constants of Picard et al. (2008).
    expect(res.body.intermediate.enhancementFactor).toBe('1.004025605');
    expectQuantitiesAsStrings(res.body);
  });

  // S. V. Gupta, Mass Metrology (Springer 2012), appendix p. 205, CIPM-2007 table: 10 °C, 730 mmHg, 40 % -> 1.19569 kg/m3
  // (as used in masscor's tests). 10 °C is outside the declared range: computed only on request, with a warning.
  it('computes outside the declared range only when asked, with a warning', async () => {
    const body = { temperatureC: 10, pressurePa: (730 * Number(MMHG_PA)).toFixed(6), relativeHumidityPercent: 40 };
    const refused = await c.post('air-density', body).expect(422);
    expect(refused.body.errors).toEqual([expect.objectContaining({ field: 'temperatureC' })]);
    expect(refused.body.validRange).toEqual({ min: '15', max: '27', unit: '°C' });
    const res = await c.post('air-density', { ...body, outsideDeclaredRange: 'warn' }).expect(200);
    expectNear(res.body.densityKgPerM3, '1.19569', 1e-5);
    expect(res.body.warnings.map((w: { code: string }) => w.code)).toEqual(['outside-declared-range']);
  });

  it('offers the OIML R 111-1 simplified formula, without CIPM intermediates', async () => {
    const res = await c
      .post('air-density', {
        temperatureC: 20,
        pressurePa: 101325,
        relativeHumidityPercent: 50,
        method: 'oiml-r111',
      })
      .expect(200);
    // OIML R 111-1 annex E: (0.34848 p - 0.009 hr exp(0.061 t)) / (273.15 + t), p in hPa.
    // Tolerance 1e-11 kg/m3: half a unit in the 12th significant digit of the returned string.
    expectNear(res.body.densityKgPerM3, (0.34848 * 1013.25 - 0.009 * 50 * Math.exp(0.061 * 20)) / 293.15, 1e-11);
    expect(res.body).toMatchObject({ method: 'oiml-r111', intermediate: null, co2MoleFraction: null });
  });
});

describe('POST /v1/calculations/z-factor', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  // ISO 8655-6 annex table of Z (mL/g) as reproduced in a piston-pipette user manual, appendix 2 (the library spec's
  // source): 1.0029 at 20 °C and 1.0040 at 25 °C, 101.3 kPa. Air taken at the water temperature and 50 %;
  // tolerance 0.51e-4 mL/g (the table's 4 decimals).
  it.each([
    [20, '1.0029'],
    [25, '1.0040'],
  ])('matches the ISO 8655-6 table at %s °C and 101.3 kPa', async (t0, expected) => {
    const airConditions = { temperatureC: t0, pressurePa: 101300, relativeHumidityPercent: 50 };
    const res = await c.post('z-factor', { waterTemperatureC: t0, airConditions }).expect(200);
    expectNear(res.body.zFactorMlPerG, expected, 0.51e-4);
    expect(res.body).toMatchObject({ airDensitySource: 'cipm-2007', weightDensityKgPerM3: '8000', warnings: [] });
    expectQuantitiesAsStrings(res.body);
  });

  it('takes a given air density and reports it', async () => {
    const res = await c.post('z-factor', { waterTemperatureC: '20', airDensityKgPerM3: '1.2' }).expect(200);
    expect(res.body).toMatchObject({ airDensityKgPerM3: '1.2', airDensitySource: 'given' });
    // Z = 1000 / (rhoW - rhoA) (1 - rhoA / rhoB) with rhoW from the Tanaka table at 20 °C (998.2067): 1.0029 to 1e-4.
    expectNear(res.body.zFactorMlPerG, (1000 / (998.2067 - 1.2)) * (1 - 1.2 / 8000), 1e-7);
  });

  it('names the nested field when the air conditions are refused', async () => {
    const res = await c
      .post('z-factor', {
        waterTemperatureC: 20,
        airConditions: { temperatureC: 20, pressurePa: 101325, relativeHumidityPercent: 130 },
      })
      .expect(422);
    expect(res.body.errors).toEqual([{ field: 'airConditions.relativeHumidityPercent', reason: 'must be between 0 and 100 %' }]);
    expect(res.body.validRange).toEqual({ min: '0', max: '100', unit: '%' });
    const water = await c.post('z-factor', { waterTemperatureC: 80, airDensityKgPerM3: '1.2' }).expect(422);
    expect(water.body.errors[0].field).toBe('waterTemperatureC');
    const air = await c.post('z-factor', { waterTemperatureC: 20, airDensityKgPerM3: '1200' }).expect(422);
    expect(air.body.errors[0].field).toBe('airDensityKgPerM3');
  });
});
