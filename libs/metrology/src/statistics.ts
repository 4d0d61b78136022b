import { Decimal, dec, type DecimalInput } from './decimal';
import { MetrologyInputError } from './errors';
import { studentTQuantile } from './statistics-quantiles';

/**
 * Replicate statistics for a calibration run: mean, sample standard deviation,
 * CV, systematic and random error (ISO 8655-6 §8 terms), Student t and normal
 * quantiles, and Grubbs' single-outlier test. Decimal in, Decimal out.
 * Quantiles live in ./statistics-quantiles (the only place Number is used).
 */

function decimals(values: readonly DecimalInput[], field: string, min: number): Decimal[] {
  if (!Array.isArray(values) || values.length < min) {
    throw new MetrologyInputError(field, `needs at least ${min} values`);
  }
  return values.map((v, i) => dec(v, `${field}[${i}]`));
}

export function mean(values: readonly DecimalInput[], field = 'values'): Decimal {
  const xs = decimals(values, field, 1);
  return xs.reduce((a, x) => a.plus(x), new Decimal(0)).div(xs.length);
}

/** Sample standard deviation (n − 1 in the denominator), two-pass. */
export function sampleStandardDeviation(values: readonly DecimalInput[], field = 'values'): Decimal {
  const xs = decimals(values, field, 2);
  const m = mean(xs, field);
  const ss = xs.reduce((a, x) => a.plus(x.minus(m).pow(2)), new Decimal(0));
  return ss.div(xs.length - 1).sqrt();
}

/** CV % = 100 · s / mean; the mean must be positive. */
export function coefficientOfVariationPercent(values: readonly DecimalInput[], field = 'values'): Decimal {
  const m = mean(values, field);
  if (!m.greaterThan(0)) throw new MetrologyInputError(field, 'must have a positive mean for a CV');
  return sampleStandardDeviation(values, field).div(m).times(100);
}

export interface SystematicError {
  readonly mean: Decimal;
  /** mean − nominal, in the unit of the values. */
  readonly error: Decimal;
  /** 100 · (mean − nominal) / nominal. */
  readonly errorPercent: Decimal;
}

export function systematicError(values: readonly DecimalInput[], nominal: DecimalInput): SystematicError {
  const v0 = dec(nominal, 'nominal');
  if (!v0.greaterThan(0)) throw new MetrologyInputError('nominal', 'must be greater than 0');
  const m = mean(values);
  const error = m.minus(v0);
  return { mean: m, error, errorPercent: error.div(v0).times(100) };
}

export interface RandomError {
  readonly standardDeviation: Decimal;
  readonly cvPercent: Decimal;
}

export function randomError(values: readonly DecimalInput[]): RandomError {
  return {
    standardDeviation: sampleStandardDeviation(values),
    cvPercent: coefficientOfVariationPercent(values),
  };
}

export type GrubbsResult =
  | { readonly applicable: false; readonly n: number; readonly reason: string }
  | {
      readonly applicable: true;
      readonly n: number;
      readonly alpha: Decimal;
      /** The replicate farthest from the mean (the first one on a tie). */
      readonly suspectValue: Decimal;
      readonly suspectIndex: number;
      readonly g: Decimal;
      readonly gCritical: Decimal;
      readonly outlier: boolean;
      readonly mean: Decimal;
      readonly standardDeviation: Decimal;
    };

/**
 * Grubbs' test for one outlier, two-sided (NIST/SEMATECH e-Handbook 1.3.5.17;
 * ASTM E178): G = max|xᵢ − x̄| / s against
 * G_crit = ((n − 1)/√n) · √(t² / (n − 2 + t²)), t the upper α/(2n) quantile of
 * Student t with n − 2 degrees of freedom. It reports; it never removes a
 * replicate. Fewer than 3 values: not applicable.
 */
export function grubbsTest(
  values: readonly DecimalInput[],
  options: {
    alpha?: DecimalInput;
    /** The mean and sample standard deviation of `values`, when the caller already has them. */
    known?: { readonly mean: Decimal; readonly standardDeviation: Decimal };
  } = {},
): GrubbsResult {
  const alpha = dec(options.alpha ?? '0.05', 'alpha');
  if (!alpha.greaterThan(0) || alpha.greaterThan(0.5)) {
    throw new MetrologyInputError('alpha', 'must be greater than 0 and at most 0.5', { min: '0', max: '0.5', unit: '1' });
  }
  const xs = decimals(values, 'values', 0);
  const n = xs.length;
  if (n < 3) return { applicable: false, n, reason: 'Grubbs test needs at least 3 replicates' };
  const m = options.known?.mean ?? mean(xs);
  const s = options.known?.standardDeviation ?? sampleStandardDeviation(xs);
  let suspectIndex = 0;
  xs.forEach((x, i) => {
    if (
      x
        .minus(m)
        .abs()
        .greaterThan((xs[suspectIndex] as Decimal).minus(m).abs())
    )
      suspectIndex = i;
  });
  const suspectValue = xs[suspectIndex] as Decimal;
  const g = s.isZero() ? new Decimal(0) : suspectValue.minus(m).abs().div(s);
  const t = studentTQuantile(new Decimal(1).minus(alpha.div(2 * n)), n - 2);
  const t2 = t.pow(2);
  const gCritical = new Decimal(n - 1).div(new Decimal(n).sqrt()).times(t2.div(t2.plus(n - 2)).sqrt());
  return {
    applicable: true,
    n,
    alpha,
    suspectValue,
    suspectIndex,
    g,
    gCritical,
    outlier: g.greaterThan(gCritical),
    mean: m,
    standardDeviation: s,
  };
}
