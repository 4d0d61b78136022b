import { Decimal } from '@registry/metrology';

import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, expectNear, expectQuantitiesAsStrings, signedIn } from './helpers';

describe('weighing calculations', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  describe('POST /v1/calculations/buoyancy', () => {
    // Worked example in a precision balance's operating instructions (manualshelf.com, section 3-6, the library
    // spec's source): aluminium 2.7 g/cm3, reading 2000.000 mg -> 2000.589 mg (air 1.2 kg/m3, weights 8000 kg/m3).
    // Tolerance 0.0005 mg = 5e-7 g: the example's last digit.
    it('reproduces the published aluminium example', async () => {
      const res = await c.post('buoyancy', { readingG: '2.000000', objectDensityKgPerM3: 2700, airDensityKgPerM3: '1.2' }).expect(200);
      expectNear(res.body.trueMassG, '2.000589', 5e-7);
      expectNear(res.body.correctionG, '0.000589', 5e-7);
      expect(res.body).toMatchObject({ airDensityKgPerM3: '1.2', airDensitySource: 'given', weightDensityKgPerM3: '8000', warnings: [] });
      expectQuantitiesAsStrings(res.body);
    });

    it('computes the air density from conditions when given them', async () => {
      const airConditions = { temperatureC: 20, pressurePa: 101325, relativeHumidityPercent: 50 };
      const res = await c.post('buoyancy', { readingG: 1, objectDensityKgPerM3: 8000, airConditions }).expect(200);
      // A body of the weights' own density needs no correction (the factor is exactly 1).
      expect(res.body).toMatchObject({ factor: '1', correctionG: '0', airDensitySource: 'cipm-2007' });
    });

    it('refuses a negative reading and an object lighter than air with 422', async () => {
      const negative = await c.post('buoyancy', { readingG: '-0.001', objectDensityKgPerM3: 998, airDensityKgPerM3: '1.2' }).expect(422);
      expect(negative.body).toMatchObject({ code: 'unprocessable-quantity', validRange: { min: '0', unit: 'g' } });
      expect(negative.body.errors).toEqual([{ field: 'readingG', reason: 'must not be negative' }]);
      const light = await c.post('buoyancy', { readingG: 1, objectDensityKgPerM3: '1.1', airDensityKgPerM3: '1.2' }).expect(422);
      expect(light.body.errors[0].field).toBe('objectDensityKgPerM3');
    });
  });

  describe('POST /v1/calculations/conventional-mass', () => {
    // OIML D 28:2004 clause 5 as quoted by a weights maker's note: mc deviates from m by about -3e-4 for aluminium
    // and +1e-4 for platinum (densities 2700 and 21450 kg/m3, handbook values from memory). Tolerance 0.5e-4.
    it.each([
      ['aluminium', 2700, -3e-4],
      ['platinum', 21450, 1e-4],
    ])('gives the published relative deviation for %s', async (_name, densityKgPerM3, expected) => {
      const res = await c.post('conventional-mass', { trueMassG: 1000, densityKgPerM3 }).expect(200);
      expect(res.body.computed).toBe('conventionalMassG');
      expectNear(String(Number(res.body.conventionalMassG) / 1000 - 1), expected, 0.5e-4);
      expectQuantitiesAsStrings(res.body);
    });

    // IUPAC Gold Book "conventional mass": for a body of 8000 kg/m3 the conventional mass equals the true mass.
    it('is the identity at 8000 kg/m3, and the reverse direction round-trips', async () => {
      const same = await c.post('conventional-mass', { trueMassG: '123.456', densityKgPerM3: '8000' }).expect(200);
      expect(same.body).toMatchObject({ trueMassG: '123.456', conventionalMassG: '123.456', referenceAirDensityKgPerM3: '1.2' });
      const fwd = await c.post('conventional-mass', { trueMassG: '100', densityKgPerM3: '2700' }).expect(200);
      const back = await c.post('conventional-mass', { conventionalMassG: fwd.body.conventionalMassG, densityKgPerM3: '2700' }).expect(200);
      expect(back.body.computed).toBe('trueMassG');
      expectNear(back.body.trueMassG, '100', 1e-9);
    });

    it('needs exactly one of the two masses (400) and refuses a negative mass (422)', async () => {
      const both = await c.post('conventional-mass', { trueMassG: 1, conventionalMassG: 1, densityKgPerM3: 8000 }).expect(400);
      expect(both.body.errors).toEqual([{ field: 'conventionalMassG', reason: 'give only one of trueMassG and conventionalMassG' }]);
      const negative = await c.post('conventional-mass', { conventionalMassG: -5, densityKgPerM3: 8000 }).expect(422);
      expect(negative.body.errors[0].field).toBe('conventionalMassG');
    });
  });

  describe('POST /v1/calculations/balance-check', () => {
    /** Ten readings m ± a alternating: their sample standard deviation is a·√(10/9), so a = s·√0.9. */
    const tenWithSd = (massG: number, sG: string): string[] => {
      const a = new Decimal(sG).times(new Decimal('0.9').sqrt()).toSignificantDigits(20);
      return Array.from({ length: 10 }, (_, i) => (i % 2 ? new Decimal(massG).plus(a) : new Decimal(massG).minus(a)).toFixed());
    };

    // "USP Balances (Repeatability, Minimum Weight, Accuracy)", scribd.com/document/274748068: minimum weight =
    // 2000 × s, examples s 0.02 mg -> 40 mg, 0.03 mg -> 60 mg, 0.2 mg -> 400 mg. Tolerance 1e-9 g.
    it.each([
      ['0.00002', '0.04'],
      ['0.00003', '0.06'],
      ['0.0002', '0.4'],
    ])('gives the minimum weight 2000·s of the USP <41> examples (s = %s g)', async (sG, minimumG) => {
      const res = await c.post('balance-check', { readabilityG: '0.00001', replicatesG: tenWithSd(50, sG), testWeightG: 50 }).expect(200);
      expectNear(res.body.minimumWeightG, minimumG, 1e-9);
      expect(res.body.repeatability).toMatchObject({ n: 10, floorApplied: false, relativeTo: 'test-weight', pass: true });
      expect(res.body).toMatchObject({ usp41: 'incomplete', labChecks: 'not-run' });
      expect(res.body.warnings.map((w: { code: string }) => w.code)).toEqual(['accuracy-not-checked']);
      expectQuantitiesAsStrings(res.body);
    });

    // USP <41>: when s < 0.41 d use 0.41 d; the minimum weight is then 820 d (Sartorius' summary of the revision).
    it('applies the 0.41 d floor, so the minimum weight is 820 d', async () => {
      const replicatesG = Array.from({ length: 10 }, () => '100.0000');
      const res = await c.post('balance-check', { readabilityG: '0.0001', replicatesG, testWeightG: 100 }).expect(200);
      expect(res.body.repeatability).toMatchObject({
        standardDeviationG: '0',
        sFloorG: '0.000041',
        sUsedG: '0.000041',
        floorApplied: true,
      });
      expect(res.body.minimumWeightG).toBe('0.082');
    });

    // USP <41> accuracy: a test weight of 5 % to 100 % of capacity reads within 0.10 % of its value.
    it('judges accuracy within 0.10 % and refuses a test weight under 5 % of capacity', async () => {
      const base = { readabilityG: '0.0001', replicatesG: tenWithSd(100, '0.0001'), testWeightG: 100, capacityG: 220 };
      const ok = await c.post('balance-check', { ...base, accuracy: { readingG: '200.19', testWeightG: '200' } }).expect(200);
      expect(ok.body.accuracy).toMatchObject({ limitG: '0.2', limitPercent: '0.1', pass: true });
      expect(ok.body.usp41).toBe('pass');
      const off = await c.post('balance-check', { ...base, accuracy: { readingG: '200.21', testWeightG: '200' } }).expect(200);
      expect(off.body).toMatchObject({ usp41: 'fail', accuracy: { pass: false } });
      const small = await c.post('balance-check', { ...base, accuracy: { readingG: 5, testWeightG: 5 } }).expect(422);
      expect(small.body.errors[0].field).toBe('accuracy.testWeightG');
      expect(small.body.validRange).toEqual({ min: '11', max: '220', unit: 'g' });
    });

    it('refuses fewer than 10 readings with 422 naming replicatesG and the minimum', async () => {
      const res = await c.post('balance-check', { readabilityG: '0.0001', replicatesG: ['1', '1', '1'], testWeightG: 1 }).expect(422);
      expect(res.body.errors[0].field).toBe('replicatesG');
      expect(res.body.validRange).toMatchObject({ min: '10' });
    });

    it('runs the eccentricity check against the lab limit and reports the worst position', async () => {
      const res = await c
        .post('balance-check', {
          readabilityG: '0.0001',
          replicatesG: tenWithSd(100, '0.0001'),
          testWeightG: 100,
          eccentricity: {
            centreReadingG: '100.0000',
            offCentreReadingsG: ['100.0002', '99.9996', '100.0001', '100.0000'],
            limitG: '0.0003',
          },
        })
        .expect(200);
      expect(res.body.eccentricity).toMatchObject({ maxDeviationIndex: 1, maxDeviationG: '0.0004', pass: false });
      expect(res.body.labChecks).toBe('fail');
      const bad = await c
        .post('balance-check', {
          readabilityG: '0.0001',
          replicatesG: tenWithSd(100, '0.0001'),
          testWeightG: 100,
          eccentricity: { centreReadingG: '100', offCentreReadingsG: ['100'], limitG: '0' },
        })
        .expect(422);
      expect(bad.body.errors[0].field).toBe('eccentricity.limitG');
    });
  });
});
