import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { coefficientOfVariationPercent, grubbsTest, mean, randomError, sampleStandardDeviation, systematicError } from './statistics';

describe('replicate statistics', () => {
  it('reproduces the NIST StRD NumAcc1 certified values (mean 10000002, s = 1)', () => {
    // NIST Statistical Reference Datasets, univariate "NumAcc1" (from memory):
    // y = 10000001, 10000003, 10000002; certified mean 10000002, standard deviation 1.
    const y = ['10000001', '10000003', '10000002'];
    expect(mean(y).equals(10000002)).toBe(true);
    expect(sampleStandardDeviation(y).equals(1)).toBe(true);
  });

  it('gives systematic and random error of a 10 mL run (hand-worked)', () => {
    // Hand-worked: deviations from 10.000 are +0.01, −0.01, +0.02, 0, −0.02 mL;
    // Σd² = 0.0010, s = √(0.0010/4) = 0.0158113883 mL, CV = 0.158113883 %.
    const v = ['10.01', '9.99', '10.02', '10.00', '9.98'];
    const sys = systematicError(v, 10);
    expect(sys.mean.equals(10)).toBe(true);
    expect(sys.error.isZero()).toBe(true);
    const rnd = randomError(v);
    expect(rnd.standardDeviation.toSignificantDigits(9).toString()).toBe('0.0158113883');
    expect(rnd.cvPercent.toSignificantDigits(9).toString()).toBe('0.158113883');
  });

  it('gives the systematic error in % of nominal (hand-worked: mean 10.03 on 10 → +0.3 %)', () => {
    const sys = systematicError(['10.02', '10.04'], '10');
    expect(sys.error.equals('0.03')).toBe(true);
    expect(sys.errorPercent.equals('0.3')).toBe(true);
  });

  it('refuses too few values, a non-number, a non-positive nominal and a CV of a zero mean', () => {
    expect(() => mean([])).toThrow(MetrologyInputError);
    expect(() => sampleStandardDeviation(['1'])).toThrow(MetrologyInputError);
    expect(() => mean(['1', 'x'])).toThrow(/values\[1\]/);
    expect(() => systematicError(['1', '2'], 0)).toThrow(MetrologyInputError);
    expect(() => coefficientOfVariationPercent(['-1', '1'])).toThrow(MetrologyInputError);
  });

  it('property: mean and s do not depend on the order of the replicates', () => {
    fc.assert(
      fc.property(
        fc
          .array(fc.integer({ min: -1_000_000, max: 1_000_000 }), { minLength: 2, maxLength: 20 })
          .chain((xs) => fc.tuple(fc.constant(xs), fc.shuffledSubarray(xs, { minLength: xs.length, maxLength: xs.length }))),
        ([xs, shuffled]) => {
          const a = xs.map((x) => new Decimal(x).div(1000));
          const b = shuffled.map((x) => new Decimal(x).div(1000));
          return mean(a).equals(mean(b)) && sampleStandardDeviation(a).minus(sampleStandardDeviation(b)).abs().lessThan('1e-28');
        },
      ),
    );
  });

  it('property: s scales with |k| and ignores a shift', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -100_000, max: 100_000 }), { minLength: 2, maxLength: 15 }),
        fc.integer({ min: -1000, max: 1000 }).filter((k) => k !== 0),
        fc.integer({ min: -1_000_000, max: 1_000_000 }),
        (xs, k, shift) => {
          const s = sampleStandardDeviation(xs);
          const scaled = sampleStandardDeviation(xs.map((x) => new Decimal(x).times(k)));
          const shifted = sampleStandardDeviation(xs.map((x) => x + shift));
          // 34 significant digits: compare relatively (1e-30 of the magnitude), not absolutely.
          const close = (a: Decimal, b: Decimal) =>
            a
              .minus(b)
              .abs()
              .lte(Decimal.max(a.abs(), b.abs(), 1).times('1e-30'));
          return close(scaled, s.times(Math.abs(k))) && close(shifted, s);
        },
      ),
    );
  });
});

describe("Grubbs' outlier test", () => {
  // Critical values G(α, n), two-sided: Harvey, Analytical Chemistry 2.1, Appendix 7
  // (chem.libretexts.org "Critical Values for Grubb's Test"), which agrees with the
  // NIST/SEMATECH e-Handbook 1.3.5.17 / ASTM E178 tables. That page prints 2.202 for
  // n = 7, α = 0.05 (a transposition of 2.020, the NIST value) and 2.755 for n = 15,
  // α = 0.01 (a repeat of the n = 14 row); both rows are left out. For n = 3 every
  // table prints 1.155, the limit (n − 1)/√n rounded; the formula gives 1.1543.
  it.each([
    [3, '0.05', '1.155', 0.0015],
    [4, '0.05', '1.481', 0.0006],
    [5, '0.05', '1.715', 0.0006],
    [6, '0.05', '1.887', 0.0006],
    [8, '0.05', '2.126', 0.0008],
    [9, '0.05', '2.215', 0.0006],
    [10, '0.05', '2.290', 0.0006],
    [11, '0.05', '2.355', 0.0006],
    [12, '0.05', '2.412', 0.0006],
    [15, '0.05', '2.549', 0.0008],
    [5, '0.01', '1.764', 0.0006],
    [10, '0.01', '2.482', 0.0006],
    [14, '0.01', '2.755', 0.0006],
  ])('G_crit(n = %s, α = %s) ≈ %s', (n, alpha, expected, tol) => {
    const values = Array.from({ length: n }, (_, i) => String(i));
    const r = grubbsTest(values, { alpha });
    if (!r.applicable) throw new Error('expected applicable');
    expect(r.gCritical.minus(expected).abs().toNumber()).toBeLessThanOrEqual(tol);
  });

  it('reports the suspect value, its index, G and the verdict without dropping anything', () => {
    // Hand-worked: 10 values; the 9th (index 8) is far out.
    const v = ['10.01', '10.00', '9.99', '10.02', '10.00', '9.98', '10.01', '10.00', '10.30', '9.99'];
    const r = grubbsTest(v);
    if (!r.applicable) throw new Error('expected applicable');
    expect(r.n).toBe(10);
    expect(r.suspectIndex).toBe(8);
    expect(r.suspectValue.equals('10.30')).toBe(true);
    expect(r.g.greaterThan(r.gCritical)).toBe(true);
    expect(r.outlier).toBe(true);
    expect(v).toHaveLength(10);
  });

  it('finds no outlier in a tight set and handles identical replicates', () => {
    const r = grubbsTest(['1.00', '1.01', '0.99', '1.00', '1.01']);
    expect(r.applicable && r.outlier).toBe(false);
    const same = grubbsTest(['2', '2', '2']);
    expect(same.applicable && same.g.isZero() && !same.outlier).toBe(true);
  });

  it('is not applicable below 3 replicates and refuses a bad α', () => {
    expect(grubbsTest(['1', '2'])).toEqual({ applicable: false, n: 2, reason: expect.stringContaining('3') });
    expect(() => grubbsTest(['1', '2', '3'], { alpha: 0 })).toThrow(MetrologyInputError);
    expect(() => grubbsTest(['1', '2', '3'], { alpha: '0.6' })).toThrow(MetrologyInputError);
  });

  it('property: flags a value placed far enough away, at its index', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -1000, max: 1000 }), { minLength: 2, maxLength: 25 }),
        fc.nat(),
        fc.boolean(),
        (base, pos, high) => {
          const values = base.map((x) => new Decimal(x).div(1000));
          const index = pos % (values.length + 1);
          values.splice(index, 0, new Decimal(high ? 1e7 : -1e7));
          const r = grubbsTest(values);
          return r.applicable && r.outlier && r.suspectIndex === index && r.n === values.length;
        },
      ),
      { numRuns: 100 },
    );
  });
});
