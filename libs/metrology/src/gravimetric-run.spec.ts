import { airDensity } from './air-density';
import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { type GravimetricPointInput, evaluateGravimetricPoint } from './gravimetric-run';
import { replicateVolume } from './gravimetric';

// A 100 mL flask ("In") weighed five times: invented bench figures, not published data.
const filled = ['159.7012', '159.7031', '159.6998', '159.7020', '159.7007'];
const temps = ['20.2', '20.3', '20.2', '20.4', '20.3'];
const point: GravimetricPointInput = {
  nominalVolumeMl: 100,
  replicates: filled.map((f, i) => ({
    readings: { mode: 'contain' as const, filledG: f, emptyG: '59.9050' },
    waterTemperatureC: temps[i] as string,
  })),
  air: { airDensityKgPerM3: '1.195' },
  material: 'borosilicate-3-3',
  uncertainties: {
    balanceCalibrationG: '0.0003',
    balanceResolutionG: '0.0001',
    waterTemperatureC: '0.05',
    airDensityKgPerM3: '0.006',
    meniscusMl: '0.005',
    evaporationMl: '0.0005',
  },
};

describe('evaluateGravimetricPoint: one point of a 100 mL flask', () => {
  const r = evaluateGravimetricPoint(point);

  it('converts each replicate with the volume model of gravimetric.ts', () => {
    expect(r.replicates).toHaveLength(5);
    const first = replicateVolume({
      readings: { mode: 'contain', filledG: '159.7012', emptyG: '59.9050' },
      waterTemperatureC: '20.2',
      airDensityKgPerM3: '1.195',
      expansionCoefficientPerK: '9.9e-6',
    });
    expect(r.replicates[0]?.volumeMl.eq(first.volumeMl)).toBe(true);
    expect(r.replicates[0]?.netMassG.toString()).toBe('99.7962');
    expect(r.expansionCoefficientPerK.toString()).toBe('0.0000099');
  });

  it('reports mean, standard deviation, CV and systematic error of the replicate volumes', () => {
    const v = r.replicates.map((x) => x.volumeMl);
    const m = v.reduce((s, x) => s.plus(x), new Decimal(0)).div(5);
    expect(r.meanVolumeMl.eq(m)).toBe(true);
    expect(r.systematicErrorMl.eq(m.minus(100))).toBe(true);
    expect(r.meanVolumeMl.toNumber()).toBeCloseTo(100.08, 1);
    expect(r.standardDeviationMl.toNumber()).toBeGreaterThan(0.0005);
    expect(r.standardDeviationMl.toNumber()).toBeLessThan(0.003);
    expect(r.cvPercent.eq(r.standardDeviationMl.div(r.meanVolumeMl).times(100))).toBe(true);
  });

  it('carries the cg-19 budget with U and k, built at the mean net mass and mean temperature', () => {
    const u = r.uncertainty;
    expect(u.budget.rows).toHaveLength(10);
    expect(u.budget.rows[0]?.value.toString()).toBe('99.79636');
    expect(u.budget.rows[2]?.value.toString()).toBe('20.28');
    expect(u.expandedUncertaintyMl.eq(u.combinedStandardUncertaintyMl.times(u.coverageFactor))).toBe(true);
    expect(u.volumeMl.minus(r.meanVolumeMl).abs().toNumber()).toBeLessThan(1e-4);
  });

  it('runs Grubbs but keeps every replicate, warns about defaults, gives no verdict without limits', () => {
    expect(r.grubbs.applicable).toBe(true);
    expect(r.verdict).toBeNull();
    expect(r.warnings.map((w) => w.code)).toContain('uncertainty-default-used');
  });
});

describe('evaluateGravimetricPoint: outliers, air conditions and verdict', () => {
  it('reports an outlier by Grubbs and keeps it in the mean', () => {
    const many = ['159.7012', '159.7031', '159.6998', '159.7020', '159.7007', '159.7015', '159.7010', '159.7300'];
    const r = evaluateGravimetricPoint({
      ...point,
      replicates: many.map((f) => ({ readings: { mode: 'contain' as const, filledG: f, emptyG: '59.9050' }, waterTemperatureC: '20.3' })),
    });
    expect(r.grubbs.applicable && r.grubbs.outlier && r.grubbs.suspectIndex).toBe(7);
    expect(r.replicates).toHaveLength(8);
    expect(r.warnings.find((w) => w.code === 'grubbs-outlier')?.field).toBe('replicates[7]');
  });

  it('computes the air density from the conditions with air-density.ts', () => {
    const conditions = { temperatureC: '21', pressurePa: '100800', relativeHumidityPercent: '45' };
    const r = evaluateGravimetricPoint({ ...point, air: { conditions } });
    expect(r.airDensityKgPerM3.eq(airDensity(conditions).densityKgPerM3)).toBe(true);
  });

  it('gives the verdict of tolerances.ts when a limit is passed', () => {
    expect(evaluateGravimetricPoint({ ...point, acceptance: { limitMl: '0.1' } }).verdict?.verdict).toBe('pass');
    expect(evaluateGravimetricPoint({ ...point, acceptance: { limitMl: '0.05' } }).verdict?.verdict).toBe('fail');
  });

  it('refuses a single replicate and a non-positive nominal volume', () => {
    expect(() => evaluateGravimetricPoint({ ...point, replicates: point.replicates.slice(0, 1) })).toThrow(MetrologyInputError);
    expect(() => evaluateGravimetricPoint({ ...point, nominalVolumeMl: 0 })).toThrow(/nominalVolumeMl/);
  });
});
