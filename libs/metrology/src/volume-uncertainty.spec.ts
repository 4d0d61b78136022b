import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { volumeModel, type VolumeModelInputs } from './gravimetric';
import { evaluateVolumeUncertainty, type VolumeUncertaintyInput, volumeBudgetInputs } from './volume-uncertainty';
import { tanakaAirFreeDensity } from './water-density';

const d = (v: string | number) => new Decimal(v);

// A 100 mL borosilicate flask weighed at 20.5 °C: typical laboratory figures, not published data.
const t = d('20.5');
const model: VolumeModelInputs = {
  netMassG: d('99.7200'),
  waterTemperatureC: t,
  waterDensityKgPerM3: tanakaAirFreeDensity(t),
  airDensityKgPerM3: d('1.19'),
  weightDensityKgPerM3: d(8000),
  expansionCoefficientPerK: d('9.9e-6'),
  referenceTemperatureC: d(20),
};
const input: VolumeUncertaintyInput = {
  model,
  replicateVolumesMl: ['100.012', '100.018', '100.015', '100.011', '100.019'],
  uncertainties: {
    balanceCalibrationG: '0.0003',
    balanceResolutionG: '0.0001',
    waterTemperatureC: '0.05',
    airDensityKgPerM3: '0.006',
    meniscusMl: '0.005',
    evaporationMl: '0.0005',
  },
};

describe('gravimetric volume budget (EURAMET cg-19 components)', () => {
  const result = evaluateVolumeUncertainty(input);
  const row = (symbol: string) => {
    const r = result.budget.rows.find((x) => x.symbol === symbol);
    if (!r) throw new Error(symbol);
    return r;
  };

  it('estimates the volume with the model of gravimetric.ts', () => {
    expect(result.volumeMl.eq(volumeModel(model))).toBe(true);
    expect(result.volumeMl.toNumber()).toBeCloseTo(100.01, 1);
  });

  it('lists the ten cg-19 components in order', () => {
    expect(result.budget.rows.map((r) => r.symbol)).toEqual([
      'm',
      'dmRes',
      't',
      'dRhoW',
      'rhoA',
      'rhoB',
      'gamma',
      'dVrep',
      'dVmen',
      'dVevap',
    ]);
  });

  it('matches the analytic partial derivatives of V = m/(ρW−ρA)·(1−ρA/ρB)·(1−γ(t−20))', () => {
    // Derivatives of the model by hand (densities in g/mL, hence the factors 1/1000).
    const m = model.netMassG;
    const rw = model.waterDensityKgPerM3.div(1000);
    const ra = model.airDensityKgPerM3.div(1000);
    const rb = model.weightDensityKgPerM3.div(1000);
    const g = model.expansionCoefficientPerK;
    const A = d(1).div(rw.minus(ra));
    const B = d(1).minus(ra.div(rb));
    const C = d(1).minus(g.times(t.minus(20)));
    const h = d('1e-4');
    const slope = tanakaAirFreeDensity(t.plus(h))
      .minus(tanakaAirFreeDensity(t.minus(h)))
      .div(h.times(2));
    const dVdRhoW = m.times(A.pow(2)).times(B).times(C).neg().div(1000);
    const expected: Record<string, Decimal> = {
      m: A.times(B).times(C),
      dmRes: A.times(B).times(C),
      dRhoW: dVdRhoW,
      rhoA: m
        .times(C)
        .times(A)
        .times(A.times(B).minus(d(1).div(rb)))
        .div(1000),
      rhoB: m.times(A).times(C).times(ra).div(rb.pow(2)).div(1000),
      gamma: m.times(A).times(B).times(t.minus(20)).neg(),
      t: m.times(A).times(B).times(g).neg().plus(dVdRhoW.times(slope)),
      dVrep: d(1),
      dVmen: d(1),
      dVevap: d(1),
    };
    for (const [symbol, c] of Object.entries(expected)) {
      expect(row(symbol).sensitivityCoefficient.minus(c).abs().lte(c.abs().times('1e-7'))).toBe(true);
    }
  });

  it('gives ∂V/∂t ≈ 0.0202 mL/K for 100 mL at 20.5 °C: water expansion 2.12e-4 /K less glass 9.9e-6 /K', () => {
    // dρ/dt of Tanaka's formula at 20.5 °C ≈ −0.211 kg/m³/K, /998.1 → 2.12e-4 /K; 100·(2.12e-4 − 0.099e-4) ≈ 0.0202.
    expect(row('t').sensitivityCoefficient.toNumber()).toBeCloseTo(0.0202, 3);
  });

  it('takes repeatability as s/√n of the replicate volumes with ν = n − 1', () => {
    // s² = 50e-6/4 = 12.5e-6 mL², s = 3.5355e-3 mL, u = s/√5 = 1.5811e-3 mL
    expect(row('dVrep').standardUncertainty.toNumber()).toBeCloseTo(0.0015811, 7);
    expect(row('dVrep').degreesOfFreedom.toNumber()).toBe(4);
    expect(row('dVrep').distribution).toBe('type-a');
  });

  it('takes resolution of two readings as d/√12·√2 = d/√6', () => {
    expect(row('dmRes').standardUncertainty.toNumber()).toBeCloseTo(0.0001 / Math.sqrt(6), 12);
  });

  it('applies and marks the documented defaults', () => {
    expect(row('dRhoW').standardUncertainty.toString()).toBe('0.00045');
    expect(row('rhoB').standardUncertainty.toNumber()).toBeCloseTo(60 / Math.sqrt(3), 10);
    expect(row('gamma').standardUncertainty.toNumber()).toBeCloseTo(9.9e-7 / Math.sqrt(3), 18);
    expect(row('rhoB').note).toMatch(/^default/);
    const given = evaluateVolumeUncertainty({ ...input, uncertainties: { ...input.uncertainties, weightDensityKgPerM3: 20 } });
    expect(given.budget.rows[5]?.standardUncertainty.toNumber()).toBe(20);
    expect(given.budget.rows[5]?.note).toBeUndefined();
  });

  it('combines into u_c, ν_eff, k and U with U % = 100·U/V', () => {
    const uc = result.combinedStandardUncertaintyMl;
    const sumSquares = result.budget.rows.reduce((s, r) => s.plus(r.contribution.pow(2)), d(0));
    expect(uc.pow(2).minus(sumSquares).abs().lt('1e-30')).toBe(true);
    // By hand: √(5.0² + 1.58² + 1.01² + 0.53² + 0.50² + 0.30² + …)·1e-3 mL ≈ 5.40e-3 mL
    expect(uc.toNumber()).toBeCloseTo(0.0054, 4);
    expect(result.effectiveDegreesOfFreedom.toNumber()).toBeGreaterThan(50); // meniscus (ν = ∞) dominates
    expect(result.coverageFactor.toString()).toBe('2');
    expect(result.expandedUncertaintyMl.eq(uc.times(2))).toBe(true);
    expect(result.relativeExpandedUncertaintyPercent.eq(result.expandedUncertaintyMl.div(result.volumeMl).times(100))).toBe(true);
  });

  it('agrees with its binary-float twin at the estimate (for Monte Carlo)', () => {
    const { inputs, numberModel } = volumeBudgetInputs(input);
    const x = Object.fromEntries(inputs.map((r) => [r.symbol, new Decimal(r.value).toNumber()]));
    expect(Math.abs(numberModel(x) / result.volumeMl.toNumber() - 1)).toBeLessThan(1e-13);
  });

  it('refuses a single replicate and a negative uncertainty', () => {
    expect(() => evaluateVolumeUncertainty({ ...input, replicateVolumesMl: ['100.01'] })).toThrow(MetrologyInputError);
    expect(() => evaluateVolumeUncertainty({ ...input, uncertainties: { ...input.uncertainties, meniscusMl: '-0.001' } })).toThrow(
      /negative/,
    );
  });
});
