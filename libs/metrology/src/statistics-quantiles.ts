import { Decimal, dec, type DecimalInput } from './decimal';
import { MetrologyInputError } from './errors';

/**
 * Normal and Student t quantiles for coverage factors (GUM / Welch–Satterthwaite,
 * any real ν ≥ 1) and for Grubbs' test.
 *
 * Number is used on purpose here: the special functions (log-gamma, incomplete
 * beta and gamma) run in IEEE doubles, and their results are rounded to 12
 * significant digits before they become Decimals, well inside their ~1e-13
 * accuracy.
 */

const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905,
  -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];
const EPS = 1e-16;
const TINY = 1e-300;
const guard = (v: number): number => (Math.abs(v) < TINY ? TINY : v);

/** ln Γ(x), x > 0: Lanczos approximation, g = 7, 9 terms (relative error < 1e-15). */
function lnGamma(x: number): number {
  const y = x - 1;
  let a = LANCZOS[0] as number;
  for (let i = 1; i < LANCZOS.length; i++) a += (LANCZOS[i] as number) / (y + i);
  const t = y + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (y + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction of the incomplete beta function (DLMF 8.17.22), modified Lentz. */
function betaContinuedFraction(x: number, a: number, b: number): number {
  let c = 1;
  let d = 1 / guard(1 - ((a + b) * x) / (a + 1));
  let h = d;
  for (let m = 1; m <= 100_000; m++) {
    for (const k of [(m * (b - m) * x) / ((a + 2 * m - 1) * (a + 2 * m)), (-(a + m) * (a + b + m) * x) / ((a + 2 * m) * (a + 2 * m + 1))]) {
      d = 1 / guard(1 + k * d);
      c = guard(1 + k / c);
      h *= d * c;
    }
    if (Math.abs(d * c - 1) < EPS) return h;
  }
  throw new MetrologyInputError('degreesOfFreedom', 'is too large for the incomplete beta function');
}

/** Regularized incomplete beta I_x(a, b) (DLMF 8.17.2), with the symmetry 8.17.4. */
function incompleteBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const front = Math.exp(a * Math.log(x) + b * Math.log1p(-x) - (lnGamma(a) + lnGamma(b) - lnGamma(a + b)));
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(x, a, b)) / a;
  return 1 - (front * betaContinuedFraction(1 - x, b, a)) / b;
}

/** Q(½, x) = erfc(√x) via the series (DLMF 8.7.1) or Legendre's continued fraction (8.9.2). */
function upperGammaHalf(x: number): number {
  const a = 0.5;
  const front = Math.exp(-x + a * Math.log(x) - lnGamma(a));
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let n = 1; n < 10_000 && Math.abs(term) > Math.abs(sum) * EPS; n++) sum += term *= x / (a + n);
    return 1 - sum * front;
  }
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 10_000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = 1 / guard(an * d + b);
    c = guard(b + an / c);
    h *= d * c;
    if (Math.abs(d * c - 1) < EPS) break;
  }
  return front * h;
}

const ACKLAM_A = [-39.69683028665376, 220.9460984245205, -275.9285104469687, 138.357751867269, -30.66479806614716, 2.506628277459239];
const ACKLAM_B = [-54.47609879822406, 161.5858368580409, -155.6989798598866, 66.80131188771972, -13.28068155288572, 1];
const ACKLAM_C = [-0.007784894002430293, -0.3223964580411365, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const ACKLAM_D = [0.007784695709041462, 0.3224671290700398, 2.445134137142996, 3.754408661907416, 1];
const horner = (cs: readonly number[], x: number): number => cs.reduce((acc, c) => acc * x + c, 0);

/** Lower-tail normal quantile for 0 < p ≤ ½: Acklam's rational start, two Halley steps on erfc. */
function normalLower(p: number): number {
  let x: number;
  if (p < 0.02425) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = horner(ACKLAM_C, q) / horner(ACKLAM_D, q);
  } else {
    const q = p - 0.5;
    x = (q * horner(ACKLAM_A, q * q)) / horner(ACKLAM_B, q * q);
  }
  for (let k = 0; k < 2 && x < 0; k++) {
    const u = (0.5 * upperGammaHalf((x * x) / 2) - p) * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
    x -= u / (1 + (x * u) / 2);
  }
  return x;
}

/** Upper-tail t quantile: the t > 0 with P(T > t) = q, 0 < q ≤ ½. */
function tUpper(q: number, nu: number): number {
  const z = -normalLower(q);
  if (nu >= 1e4) {
    // Cornish–Fisher expansion in 1/ν (Abramowitz & Stegun 26.7.5), truncation < 1e-15 here.
    const g = [
      (z ** 3 + z) / 4,
      (5 * z ** 5 + 16 * z ** 3 + 3 * z) / 96,
      (3 * z ** 7 + 19 * z ** 5 + 17 * z ** 3 - 15 * z) / 384,
      (79 * z ** 9 + 776 * z ** 7 + 1482 * z ** 5 - 1920 * z ** 3 - 945 * z) / 92160,
    ];
    return g.reduce((t, gi, i) => t + gi / nu ** (i + 1), z);
  }
  // P(T > t) = ½ I_{ν/(ν+t²)}(ν/2, ½) (A&S 26.7.1 with 26.5.27); safeguarded Newton on the tail.
  const tail = (t: number): number => 0.5 * incompleteBeta(nu / (nu + t * t), nu / 2, 0.5);
  const lnC = lnGamma((nu + 1) / 2) - lnGamma(nu / 2) - 0.5 * Math.log(nu * Math.PI);
  const pdf = (t: number): number => Math.exp(lnC - ((nu + 1) / 2) * Math.log1p((t * t) / nu));
  let lo = 0;
  let hi = Math.max(1, z);
  while (tail(hi) > q) hi *= 2;
  let t = (lo + hi) / 2;
  for (let i = 0; i < 300; i++) {
    const f = tail(t) - q;
    if (f > 0) lo = t;
    else hi = t;
    let next = t + f / pdf(t);
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    if (Math.abs(next - t) <= 1e-15 * next) return next;
    t = next;
  }
  return t;
}

const P_MIN = 1e-12;

function probability(p: DecimalInput, field: string): Decimal {
  const d = dec(p, field);
  if (d.lessThan(P_MIN) || d.greaterThan(new Decimal(1).minus(P_MIN))) {
    throw new MetrologyInputError(field, `must be between ${P_MIN} and 1 − ${P_MIN}`, {
      min: String(P_MIN),
      max: `1 - ${P_MIN}`,
      unit: '1',
    });
  }
  return d;
}

/** Runs a lower-tail quantile through the upper tail of the smaller side, keeping small tails exact. */
function symmetricQuantile(p: Decimal, upper: (q: number) => number): Decimal {
  const half = new Decimal(0.5);
  if (p.equals(half)) return new Decimal(0);
  const q = p.greaterThan(half) ? new Decimal(1).minus(p) : p;
  const value = new Decimal(upper(q.toNumber()).toPrecision(12));
  return p.greaterThan(half) ? value : value.neg();
}

/** Standard normal quantile Φ⁻¹(p). */
export function normalQuantile(p: DecimalInput): Decimal {
  return symmetricQuantile(probability(p, 'p'), (q) => -normalLower(q));
}

/** Student t quantile: the t with P(T ≤ t) = p for ν ≥ 1 degrees of freedom (any real ν; Infinity → normal). */
export function studentTQuantile(p: DecimalInput, degreesOfFreedom: DecimalInput): Decimal {
  const prob = probability(p, 'p');
  let nu: Decimal;
  try {
    nu = new Decimal(degreesOfFreedom);
  } catch {
    throw new MetrologyInputError('degreesOfFreedom', 'is not a number');
  }
  if (nu.isNaN() || nu.lessThan(1)) {
    throw new MetrologyInputError('degreesOfFreedom', 'must be at least 1', { min: '1', unit: '1' });
  }
  if (!nu.isFinite()) return normalQuantile(prob);
  return symmetricQuantile(prob, (q) => tUpper(q, nu.toNumber()));
}

/** Two-sided coverage factor: the t with P(|T| ≤ t) = confidence (e.g. 0.95). */
export function studentTTwoSided(confidence: DecimalInput, degreesOfFreedom: DecimalInput): Decimal {
  const c = dec(confidence, 'confidence');
  if (!c.greaterThan(0) || !c.lessThan(1)) throw new MetrologyInputError('confidence', 'must be between 0 and 1 (exclusive)');
  return studentTQuantile(c.plus(1).div(2), degreesOfFreedom);
}
