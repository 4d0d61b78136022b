import { Decimal } from '@registry/metrology';

import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, expectNear, expectQuantitiesAsStrings, signedIn } from './helpers';

// ISO 8655-6 annex table of Z (mL/g) as reproduced in a piston-pipette user manual, appendix 2 (the source of the
// library's Z spec): 1.0029 at 20 °C and 1.0040 at 25 °C, 101.3 kPa. The table has 4 decimals: tolerance 0.51e-4 mL/g.
const Z20 = 1.0029;
const Z25 = 1.004;
const Z_TOL = 0.51e-4;

const airAt = (temperatureC: number) => ({ temperatureC, pressurePa: 101300, relativeHumidityPercent: 50 });
const uncertainties = {
  balanceCalibrationG: '0.0002',
  balanceResolutionG: '0.0001',
  waterTemperatureC: '0.05',
  airDensityKgPerM3: '0.005',
  meniscusMl: '0.005',
  evaporationMl: '0',
};

/** A 100 mL flask weighed filled and empty, water and air at 20 °C; `nets` are the net masses in g. */
const flask = (nets: string[], extra: Record<string, unknown> = {}) => ({
  deliveryMode: 'contain',
  nominalVolumeMl: '100',
  replicates: nets.map((n) => ({ filledG: new Decimal('60').plus(n).toFixed(), emptyG: '60.0000', waterTemperatureC: '20.0' })),
  airConditions: airAt(20),
  material: 'borosilicate-3-3',
  uncertainties,
  ...extra,
});
const NETS = ['99.7000', '99.7010', '99.6990'];

describe('POST /v1/calculations/gravimetric-volume', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  it('converts each replicate with the tabulated Z at 20 °C and reports mean, s, CV and systematic error', async () => {
    const res = await c.post('gravimetric-volume', flask(NETS)).expect(200);
    const b = res.body;
    NETS.forEach((net, i) => {
      expect(b.replicates[i]).toMatchObject({ index: i, netMassG: new Decimal(net).toFixed(), waterTemperatureC: '20' });
      expectNear(b.replicates[i].zFactorMlPerG, Z20, Z_TOL);
      // At the reference temperature the expansion term vanishes: V = m·Z.
      expectNear(b.replicates[i].volumeMl, Number(net) * Z20, Number(net) * Z_TOL);
    });
    expectNear(b.meanVolumeMl, 99.7 * Z20, 99.7 * Z_TOL);
    expectNear(b.systematicErrorMl, 99.7 * Z20 - 100, 99.7 * Z_TOL);
    // Same Z for every replicate, so s(V) = Z·s(m), and s(m) of 99.7000/99.7010/99.6990 g is 0.0010 g exactly.
    expectNear(b.standardDeviationMl, 0.001 * Z20, 0.001 * Z_TOL);
    expectNear(b.cvPercent, (100 * Number(b.standardDeviationMl)) / Number(b.meanVolumeMl), 1e-9);
    expect(b).toMatchObject({ referenceTemperatureC: '20', weightDensityKgPerM3: '8000', airDensitySource: 'cipm-2007' });
    expect(b.expansionCoefficientPerK).toBe('0.0000099');
    expectQuantitiesAsStrings(b);
  });

  it('uses the tabulated Z at 25 °C for a delivered volume (expansion set to 0 to isolate Z)', async () => {
    const nets = ['24.9000', '24.9100', '24.9200'];
    const res = await c
      .post('gravimetric-volume', {
        deliveryMode: 'deliver',
        nominalVolumeMl: 25,
        replicates: nets.map((n) => ({ beforeG: '40', afterG: new Decimal(40).plus(n).toFixed(), waterTemperatureC: 25 })),
        airConditions: airAt(25),
        expansionCoefficientPerK: 0,
        uncertainties,
      })
      .expect(200);
    nets.forEach((n, i) => expectNear(res.body.replicates[i].volumeMl, Number(n) * Z25, Number(n) * Z_TOL));
  });

  it('carries a GUM budget whose parts add up (JCGM 100 eq. 10 and U = k·u_c)', async () => {
    const b = (await c.post('gravimetric-volume', flask(NETS)).expect(200)).body;
    expect(b.uncertaintyBudget).toHaveLength(10);
    const contributions = b.uncertaintyBudget.map((r: { contributionMl: string }) => Number(r.contributionMl));
    const uc = Math.sqrt(contributions.reduce((s: number, x: number) => s + x * x, 0));
    expectNear(b.combinedStandardUncertaintyMl, uc, uc * 1e-9);
    expectNear(b.expandedUncertaintyMl, Number(b.coverageFactor) * uc, uc * 1e-8);
    const shares = b.uncertaintyBudget.reduce((s: number, r: { share: string }) => s + Number(r.share), 0);
    expectNear(String(shares), 1, 1e-9);
    // The meniscus enters the model additively: sensitivity 1, contribution = its standard uncertainty.
    expect(b.uncertaintyBudget.find((r: { symbol: string }) => r.symbol === 'dVmen')).toMatchObject({
      sensitivityCoefficient: '1',
      contributionMl: '0.005',
    });
    const repeatability = b.uncertaintyBudget.find((r: { symbol: string }) => r.symbol === 'dVrep');
    expect(repeatability).toMatchObject({ distribution: 'type-a', degreesOfFreedom: '2' });
    expect(b.warnings.map((w: { code: string }) => w.code)).toContain('uncertainty-default-used');
  });

  // ISO 1042:1998 class A, 100 mL: ±0.10 mL (checked against the German Eichordnung, Anlage 12, 3.2).
  it('judges against the published class limit, and the lab limit wins when given', async () => {
    const cls = { vesselKind: 'volumetric-flask', accuracyClass: 'A' };
    const pass = (await c.post('gravimetric-volume', flask(NETS, cls)).expect(200)).body.verdict;
    expect(pass).toMatchObject({ verdict: 'pass', limitSource: 'table', limitMl: '0.1', overrideReason: null });
    expect(pass.publishedLimit).toMatchObject({
      source: 'ISO 1042:1998',
      tableId: 'iso-1042-1998',
      verification: 'checked',
      limitMl: '0.1',
    });
    const low = (await c.post('gravimetric-volume', flask(['99.5500', '99.5510', '99.5490'], cls)).expect(200)).body.verdict;
    expect(low).toMatchObject({ verdict: 'fail', limitSource: 'table' });
    const reason = 'tighter in-house limit for titrant standardisation';
    const lab = (await c.post('gravimetric-volume', flask(NETS, { ...cls, limitMl: '0.005', limitReason: reason })).expect(200)).body
      .verdict;
    expect(lab).toMatchObject({ verdict: 'fail', limitSource: 'lab-override', limitMl: '0.005', overrideReason: reason });
    expect(lab.publishedLimit).toMatchObject({ limitMl: '0.1' });
  });

  it('says no-limit when no limit is known, and warns when a published size is missing or unverified', async () => {
    const none = (await c.post('gravimetric-volume', flask(NETS)).expect(200)).body;
    expect(none.verdict).toMatchObject({ verdict: 'no-limit', limitSource: 'none', limitMl: null, publishedLimit: null });
    const odd = await c.post(
      'gravimetric-volume',
      flask(NETS, { vesselKind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 99 }),
    );
    expect(odd.body.verdict.verdict).toBe('no-limit');
    expect(odd.body.warnings.map((w: { code: string }) => w.code)).toContain('no-published-limit');
    // The library marks its ISO 648 (one-mark pipettes) table as transcribed from memory.
    const pipette = await c.post('gravimetric-volume', flask(NETS, { vesselKind: 'one-mark-pipette', accuracyClass: 'AS' }));
    expect(pipette.body.verdict).toMatchObject({ limitSource: 'table', publishedLimit: { verification: 'from-memory' } });
    expect(pipette.body.warnings.map((w: { code: string }) => w.code)).toContain('published-limit-unverified');
  });

  // Grubbs critical value G(n = 8, α = 0.05, two-sided) = 2.126: Harvey, Analytical Chemistry 2.1, appendix 7, which
  // agrees with the NIST/SEMATECH e-Handbook 1.3.5.17 table (the library spec's source). Tolerance 0.0008.
  it('reports an outlier by Grubbs and never drops it', async () => {
    const nets = ['99.7000', '99.7010', '99.6990', '99.7005', '99.6995', '99.7002', '99.6998', '99.7300'];
    const b = (await c.post('gravimetric-volume', flask(nets)).expect(200)).body;
    expectNear(b.outliers.gCritical, '2.126', 0.0008);
    expect(b.outliers).toMatchObject({ test: 'grubbs', applicable: true, alpha: '0.05', suspectIndex: 7, outlier: true });
    expect(b.replicates).toHaveLength(8);
    const meanNet = nets.reduce((s, n) => s + Number(n), 0) / nets.length;
    expectNear(b.meanVolumeMl, meanNet * Z20, meanNet * Z_TOL);
    expect(b.warnings).toContainEqual(expect.objectContaining({ code: 'grubbs-outlier', field: 'replicates.7' }));
  });

  it('names the replicate and field in 422 problems', async () => {
    const body = flask(NETS);
    const lighter = structuredClone(body);
    lighter.replicates.push({ filledG: '59.9000', emptyG: '60.0000', waterTemperatureC: '20.0' });
    const r1 = await c.post('gravimetric-volume', lighter).expect(422);
    expect(r1.body.errors).toEqual([{ field: 'replicates.3.filledG', reason: expect.stringMatching(/greater than emptyG/) }]);
    const hot = structuredClone(body);
    hot.replicates[1]!.waterTemperatureC = '80';
    const r2 = await c.post('gravimetric-volume', hot).expect(422);
    expect(r2.body.errors[0].field).toBe('replicates.1.waterTemperatureC');
    expect(r2.body.validRange).toEqual({ min: '0', max: '40', unit: '°C' });
    const humid = await c
      .post('gravimetric-volume', { ...body, airConditions: { ...airAt(20), relativeHumidityPercent: 130 } })
      .expect(422);
    expect(humid.body.errors[0].field).toBe('airConditions.relativeHumidityPercent');
    const cases: [Record<string, unknown>, string][] = [
      [{ uncertainties: { ...uncertainties, meniscusMl: '-0.001' } }, 'uncertainties.meniscusMl'],
      [{ grubbsAlpha: '0.9' }, 'grubbsAlpha'],
      [{ referenceTemperatureC: '80' }, 'referenceTemperatureC'],
      [{ limitMl: '0', limitReason: 'x' }, 'limitMl'],
      [{ weightDensityKgPerM3: '1' }, 'weightDensityKgPerM3'],
    ];
    for (const [extra, field] of cases) {
      const res = await c.post('gravimetric-volume', { ...body, ...extra }).expect(422);
      expect(res.body.errors[0].field).toBe(field);
    }
  });

  it('refuses malformed points with 400 naming each field', async () => {
    const mixed = flask(NETS);
    (mixed.replicates[0] as Record<string, string>) = { beforeG: '1', afterG: '2', waterTemperatureC: '20' };
    const r1 = await c.post('gravimetric-volume', mixed).expect(400);
    expect(r1.body.errors.map((e: { field: string }) => e.field).sort()).toEqual([
      'replicates.0.afterG',
      'replicates.0.beforeG',
      'replicates.0.emptyG',
      'replicates.0.filledG',
    ]);
    const many = await c.post('gravimetric-volume', flask(Array.from({ length: 51 }, () => '99.7'))).expect(400);
    expect(many.body.errors).toEqual([{ field: 'replicates', reason: 'accepts at most 50 replicates' }]);
    const one = await c.post('gravimetric-volume', flask(['99.7'])).expect(400);
    expect(one.body.errors[0].field).toBe('replicates');
    const both = await c.post('gravimetric-volume', flask(NETS, { expansionCoefficientPerK: '9.9e-6' })).expect(400);
    expect(both.body.errors[0].field).toBe('expansionCoefficientPerK');
    const unknown = await c.post('gravimetric-volume', flask(NETS, { material: 'unobtainium' })).expect(400);
    expect(unknown.body.errors[0].field).toBe('material');
    const alone = await c.post('gravimetric-volume', flask(NETS, { limitMl: '0.05' })).expect(400);
    expect(alone.body.errors).toEqual([{ field: 'limitReason', reason: 'is required with limitMl' }]);
  });
});
