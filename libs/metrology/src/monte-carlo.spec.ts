import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { createUniformRandom, monteCarlo, type MonteCarloInput, monteCarloVolume } from './monte-carlo';
import { tanakaAirFreeDensity } from './water-density';
import { evaluateVolumeUncertainty, type VolumeUncertaintyInput } from './volume-uncertainty';

const sum4 = (x: Readonly<Record<string, number>>) => (x.x1 as number) + (x.x2 as number) + (x.x3 as number) + (x.x4 as number);
const four = (distribution: MonteCarloInput['distribution']): MonteCarloInput[] =>
  [1, 2, 3, 4].map((i) => ({ symbol: `x${i}`, value: 0, standardUncertainty: 1, distribution, degreesOfFreedom: Infinity }));

describe('additive model Y = X1+X2+X3+X4 (JCGM 101:2008 9.2)', () => {
  it('Gaussian inputs: u(y) = 2.00, 95 % interval [−3.92, 3.92] (9.2.2, Table 2)', () => {
    const r = monteCarlo(four('normal'), sum4, { trials: 1_000_000 });
    expect(r.estimate.toNumber()).toBeCloseTo(0, 1);
    expect(r.standardUncertainty.toNumber()).toBeCloseTo(2.0, 2);
    expect(r.coverageInterval.low.toNumber()).toBeCloseTo(-3.92, 1);
    expect(r.coverageInterval.high.toNumber()).toBeCloseTo(3.92, 1);
  });

  it('rectangular inputs of unit standard deviation: u(y) = 2.00, interval ±3.88 (9.2.3, Table 3)', () => {
    const r = monteCarlo(four('rectangular'), sum4, { trials: 1_000_000 });
    expect(r.standardUncertainty.toNumber()).toBeCloseTo(2.0, 2);
    expect(r.coverageInterval.low.toNumber()).toBeCloseTo(-3.88, 1);
    expect(r.coverageInterval.high.toNumber()).toBeCloseTo(3.88, 1);
  });
});

describe('input distributions (JCGM 101 6.4)', () => {
  const one = (x: Readonly<Record<string, number>>) => x.x as number;

  it('type A with ν = 5 is a scaled t: 95 % interval ±2.57 u (JCGM 100 Table G.2), sd = u·√(5/3)', () => {
    const r = monteCarlo([{ symbol: 'x', value: 10, standardUncertainty: 1, distribution: 'type-a', degreesOfFreedom: 5 }], one, {
      trials: 1_000_000,
    });
    expect(r.coverageInterval.high.toNumber() - 10).toBeCloseTo(2.57, 1);
    expect(10 - r.coverageInterval.low.toNumber()).toBeCloseTo(2.57, 1);
    expect(r.standardUncertainty.toNumber()).toBeCloseTo(Math.sqrt(5 / 3), 1);
  });

  it('triangular of u = 1 (half-width √6): 95 % interval ±√6·(1 − √0.05) = ±1.902', () => {
    const r = monteCarlo([{ symbol: 'x', value: 0, standardUncertainty: 1, distribution: 'triangular', degreesOfFreedom: Infinity }], one, {
      trials: 400_000,
    });
    expect(r.standardUncertainty.toNumber()).toBeCloseTo(1, 2);
    expect(r.coverageInterval.high.toNumber()).toBeCloseTo(1.902, 1);
  });

  it('gives a shortest interval no wider than the symmetric one for a skewed output', () => {
    const inputs: MonteCarloInput[] = [
      { symbol: 'x', value: 1, standardUncertainty: 0.5, distribution: 'normal', degreesOfFreedom: Infinity },
    ];
    const sq = (x: Readonly<Record<string, number>>) => (x.x as number) ** 2;
    const s = monteCarlo(inputs, sq, { trials: 50_000 });
    const sh = monteCarlo(inputs, sq, { trials: 50_000, interval: 'shortest' });
    const width = (r: typeof s) => r.coverageInterval.high.minus(r.coverageInterval.low).toNumber();
    expect(width(sh)).toBeLessThan(width(s));
    expect(sh.coverageInterval.low.toNumber()).toBeLessThan(s.coverageInterval.low.toNumber());
  });
});

describe('reproducibility', () => {
  it('repeats the same uniform stream for the same seed, a different one for another', () => {
    const a = createUniformRandom(42);
    const b = createUniformRandom(42);
    const c = createUniformRandom(43);
    const xs = Array.from({ length: 5 }, () => a());
    expect(Array.from({ length: 5 }, () => b())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c())).not.toEqual(xs);
    for (const x of xs) expect(x > 0 && x < 1).toBe(true);
  });

  it('refuses too few trials for the coverage probability (JCGM 101 7.2.2)', () => {
    expect(() => monteCarlo(four('normal'), sum4, { trials: 150 })).toThrow(MetrologyInputError);
  });
});

const volumeInput = (o: {
  massG: number;
  tC: number;
  uMeniscus: number;
  replicates: number[];
  uT: number;
  uBal: number;
}): VolumeUncertaintyInput => {
  const t = new Decimal(o.tC);
  return {
    model: {
      netMassG: new Decimal(o.massG),
      waterTemperatureC: t,
      waterDensityKgPerM3: tanakaAirFreeDensity(t),
      airDensityKgPerM3: new Decimal('1.19'),
      weightDensityKgPerM3: new Decimal(8000),
      expansionCoefficientPerK: new Decimal('9.9e-6'),
      referenceTemperatureC: new Decimal(20),
    },
    replicateVolumesMl: o.replicates.map((v) => v + o.massG * 1.003),
    uncertainties: {
      balanceCalibrationG: o.uBal,
      balanceResolutionG: '0.0001',
      waterTemperatureC: o.uT,
      airDensityKgPerM3: '0.006',
      meniscusMl: o.uMeniscus,
      evaporationMl: '0.0005',
    },
  };
};

describe('Monte Carlo cross-check of the cg-19 volume budget', () => {
  const base = volumeInput({
    massG: 99.72,
    tC: 20.5,
    uMeniscus: 0.005,
    replicates: [0.002, 0.008, 0.005, 0.001, 0.009, 0.004, 0.006, 0.003, 0.007, 0.005],
    uT: 0.05,
    uBal: 0.0003,
  });

  it('runs 10⁵ draws well under a few seconds and matches the GUM estimate and u_c', () => {
    const gum = evaluateVolumeUncertainty(base);
    const started = performance.now();
    const mc = monteCarloVolume(base, { trials: 100_000, seed: 7 });
    const ms = performance.now() - started;
    console.info(`10^5-draw Monte Carlo over the volume model: ${ms.toFixed(0)} ms`);
    expect(ms).toBeLessThan(3000);
    expect(mc.estimate.minus(gum.volumeMl).abs().toNumber()).toBeLessThan(1e-4);
    expect(mc.standardUncertainty.div(gum.combinedStandardUncertaintyMl).toNumber()).toBeCloseTo(1, 1);
  });

  const typical = (spreadMl: number) =>
    fc.record({
      massG: fc.double({ min: 5, max: 250, noNaN: true }),
      tC: fc.double({ min: 17, max: 25, noNaN: true }),
      uMeniscus: fc.double({ min: 0.003, max: 0.02, noNaN: true }),
      replicates: fc.array(fc.double({ min: 0, max: spreadMl, noNaN: true }), { minLength: 10, maxLength: 20 }),
      uT: fc.double({ min: 0.02, max: 0.2, noNaN: true }),
      uBal: fc.double({ min: 0.0001, max: 0.002, noNaN: true }),
    });

  it('property: for typical inputs GUM u_c and Monte Carlo u(y) agree within 5 %', () => {
    fc.assert(
      fc.property(typical(0.004), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (o, seed) => {
        const input = volumeInput(o);
        const gum = evaluateVolumeUncertainty(input).combinedStandardUncertaintyMl.toNumber();
        const mc = monteCarloVolume(input, { trials: 20_000, seed }).standardUncertainty.toNumber();
        return Math.abs(mc / gum - 1) < 0.05;
      }),
      { numRuns: 25, seed: 2008 },
    );
  });

  it('property: with Type A rows drawn from t_ν, u(y) matches Σ c²u²·ν/(ν−2) within 3 % (JCGM 101 6.4.9)', () => {
    // Any spread, including repeatability that dominates: the t-distribution widens
    // the Type A component by √(ν/(ν−2)), which the GUM u_c does not include.
    fc.assert(
      fc.property(typical(0.02), fc.integer({ min: 1, max: 2 ** 31 - 1 }), (o, seed) => {
        const input = volumeInput(o);
        const rows = evaluateVolumeUncertainty(input).budget.rows;
        const variance = rows.reduce((s, r) => {
          const nu = r.degreesOfFreedom.toNumber();
          return s + r.contribution.toNumber() ** 2 * (Number.isFinite(nu) ? nu / (nu - 2) : 1);
        }, 0);
        const mc = monteCarloVolume(input, { trials: 20_000, seed }).standardUncertainty.toNumber();
        return Math.abs(mc / Math.sqrt(variance) - 1) < 0.03;
      }),
      { numRuns: 25, seed: 101 },
    );
  });
});
