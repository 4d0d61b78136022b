import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { type BudgetRow, type Distribution } from './uncertainty';
import { type VolumeUncertaintyInput, volumeBudgetInputs } from './volume-uncertainty';

/**
 * Propagation of distributions by Monte Carlo (JCGM 101:2008, GUM Supplement 1).
 *
 * A cross-check of the GUM budget, not the reported result: inside the loop the
 * model runs in binary floating point (JS numbers) so that 10⁵ draws take well
 * under a second; results are converted to Decimal at the boundary only.
 *
 * PDFs assigned from a budget row (JCGM 101 6.4):
 * - 'rectangular': half-width u·√3 (6.4.2); 'triangular': symmetric, half-width u·√6 (6.4.5);
 * - 'normal' and 'type-a': Gaussian when ν = ∞ (6.4.7); with finite ν a scaled and
 *   shifted t-distribution x + u·t_ν (6.4.9). Its standard deviation is
 *   u·√(ν/(ν − 2)), larger than the GUM u, and infinite for ν ≤ 2: expect the
 *   Monte Carlo u(y) to exceed the GUM u_c when few replicates dominate.
 * Random numbers: xoshiro128** seeded through splitmix32, fixed seed by default,
 * so that results are reproducible. Normal deviates by Box–Muller; χ² by the
 * Marsaglia–Tsang gamma method.
 */
export interface MonteCarloInput {
  readonly symbol: string;
  readonly value: number;
  readonly standardUncertainty: number;
  readonly distribution: Distribution;
  /** Infinity for a Gaussian. */
  readonly degreesOfFreedom: number;
}

export interface MonteCarloOptions {
  /** Number of trials M; default 10⁵ (JCGM 101 7.2.2 suggests 10⁶ for a 95 % interval to 1–2 digits). */
  readonly trials?: number;
  /** 32-bit seed; default 20080101. */
  readonly seed?: number;
  /** Default 0.95. */
  readonly coverageProbability?: number;
  /** 'symmetric' (probabilistically symmetric, default) or 'shortest' (JCGM 101 7.7). */
  readonly interval?: 'symmetric' | 'shortest';
}

export interface MonteCarloResult {
  readonly estimate: Decimal;
  readonly standardUncertainty: Decimal;
  readonly coverageInterval: { readonly low: Decimal; readonly high: Decimal };
  readonly coverageProbability: Decimal;
  readonly interval: 'symmetric' | 'shortest';
  readonly trials: number;
  readonly seed: number;
}

// Math and Number functions bound once: under a contextified global (e.g. a
// test runner's vm sandbox) every global lookup in the hot loop is expensive.
const { imul, sqrt, log, cos, sin, floor, PI } = Math;
const isFiniteNumber = Number.isFinite;
const isInteger = Number.isInteger;

export type NumberModel = (x: Readonly<Record<string, number>>) => number;

/** Deterministic uniform generator on the open interval (0, 1), 53-bit resolution. */
export function createUniformRandom(seed: number): () => number {
  let a = seed | 0;
  const mix = () => {
    a = (a + 0x9e3779b9) | 0;
    let z = a ^ (a >>> 16);
    z = imul(z, 0x21f0aaad);
    z ^= z >>> 15;
    z = imul(z, 0x735a2d97);
    return (z ^ (z >>> 15)) >>> 0;
  };
  let s0 = mix(),
    s1 = mix(),
    s2 = mix(),
    s3 = mix();
  if ((s0 | s1 | s2 | s3) === 0) s0 = 1;
  const next32 = () => {
    const r = imul(rotl(imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    s2 ^= s0;
    s3 ^= s1;
    s1 ^= s2;
    s0 ^= s3;
    s2 ^= t;
    s3 = rotl(s3, 11);
    return r;
  };
  return () => ((next32() >>> 5) * 67108864 + (next32() >>> 6) + 0.5) / 9007199254740992;
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** Draws M values of the model output and summarises them (JCGM 101 7.5–7.7). */
export function monteCarlo(inputs: readonly MonteCarloInput[], model: NumberModel, options: MonteCarloOptions = {}): MonteCarloResult {
  const trials = options.trials ?? 100_000;
  const seed = options.seed ?? 20080101;
  const p = options.coverageProbability ?? 0.95;
  const kind = options.interval ?? 'symmetric';
  if (!isInteger(trials) || trials < 100) throw new MetrologyInputError('trials', 'must be an integer of at least 100');
  if (!(p > 0 && p < 1)) throw new MetrologyInputError('coverageProbability', 'must be between 0 and 1 (exclusive)');
  if (trials * (1 - p) < 10) throw new MetrologyInputError('trials', `too few for a ${p * 100} % interval (JCGM 101 7.2.2)`);
  const uniform = createUniformRandom(seed);
  const normal = gaussian(uniform);
  const samplers = inputs.map((i) => sampler(i, uniform, normal));
  const point: Record<string, number> = {};
  const y = new Float64Array(trials);
  for (let r = 0; r < trials; r++) {
    for (let i = 0; i < inputs.length; i++) point[(inputs[i] as MonteCarloInput).symbol] = (samplers[i] as () => number)();
    const v = model(point);
    if (!isFiniteNumber(v)) throw new MetrologyInputError('model', 'gave a non-finite value for a Monte Carlo draw');
    y[r] = v;
  }
  let mean = 0;
  for (let r = 0; r < trials; r++) mean += ((y[r] as number) - mean) / (r + 1);
  let ss = 0;
  for (let r = 0; r < trials; r++) ss += ((y[r] as number) - mean) ** 2;
  y.sort();
  const q = isInteger(p * trials) ? p * trials : floor(p * trials + 0.5);
  let low: number; // 1-based index r of JCGM 101 7.7
  if (kind === 'symmetric') low = (trials - q) % 2 === 0 ? (trials - q) / 2 : (trials - q + 1) / 2;
  else {
    low = 1;
    for (let r = 2; r <= trials - q; r++)
      if ((y[r + q - 1] as number) - (y[r - 1] as number) < (y[low + q - 1] as number) - (y[low - 1] as number)) low = r;
  }
  if (low < 1) low = 1;
  return {
    estimate: new Decimal(mean),
    standardUncertainty: new Decimal(sqrt(ss / (trials - 1))),
    coverageInterval: { low: new Decimal(y[low - 1] as number), high: new Decimal(y[low + q - 1] as number) },
    coverageProbability: new Decimal(p),
    interval: kind,
    trials,
    seed,
  };
}

/** Monte Carlo over the rows of a GUM budget, with the model in binary floating point. */
export function monteCarloFromBudget(rows: readonly BudgetRow[], model: NumberModel, options: MonteCarloOptions = {}): MonteCarloResult {
  const inputs = rows.map((r) => ({
    symbol: r.symbol,
    value: r.value.toNumber(),
    standardUncertainty: r.standardUncertainty.toNumber(),
    distribution: r.distribution,
    degreesOfFreedom: r.degreesOfFreedom.toNumber(),
  }));
  return monteCarlo(inputs, model, options);
}

/** JCGM 101 cross-check of the cg-19 volume budget (same inputs, same PDFs), mL. */
export function monteCarloVolume(input: VolumeUncertaintyInput, options: MonteCarloOptions = {}): MonteCarloResult {
  const { inputs, numberModel } = volumeBudgetInputs(input);
  const mc = inputs.map((r) => ({
    symbol: r.symbol,
    value: new Decimal(r.value).toNumber(),
    standardUncertainty: new Decimal(r.standardUncertainty).toNumber(),
    distribution: r.distribution,
    degreesOfFreedom: r.degreesOfFreedom === undefined ? Infinity : new Decimal(r.degreesOfFreedom).toNumber(),
  }));
  return monteCarlo(mc, numberModel, options);
}

function sampler(i: MonteCarloInput, uniform: () => number, normal: () => number): () => number {
  const { value: x, standardUncertainty: u, distribution, degreesOfFreedom: nu } = i;
  if (!isFiniteNumber(x) || !(u >= 0))
    throw new MetrologyInputError(i.symbol, 'needs a finite value and a non-negative standard uncertainty');
  if (u === 0) return () => x;
  if (distribution === 'rectangular') return () => x + u * sqrt(3) * (2 * uniform() - 1);
  if (distribution === 'triangular') return () => x + u * sqrt(6) * (uniform() + uniform() - 1);
  if (!isFiniteNumber(nu)) return () => x + u * normal();
  if (!(nu > 0)) throw new MetrologyInputError(i.symbol, 'degrees of freedom must be positive');
  return () => x + (u * normal()) / sqrt((2 * gammaDeviate(nu / 2, uniform, normal)) / nu);
}

function gaussian(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const r = sqrt(-2 * log(uniform()));
    const phi = 2 * PI * uniform();
    spare = r * sin(phi);
    return r * cos(phi);
  };
}

/** Gamma(shape, 1) by Marsaglia & Tsang (ACM TOMS 26, 2000); shape < 1 by the u^(1/a) boost. */
function gammaDeviate(shape: number, uniform: () => number, normal: () => number): number {
  if (shape < 1) return gammaDeviate(shape + 1, uniform, normal) * uniform() ** (1 / shape);
  const d = shape - 1 / 3;
  const c = 1 / sqrt(9 * d);
  for (;;) {
    const z = normal();
    const v = (1 + c * z) ** 3;
    if (v <= 0) continue;
    if (log(uniform()) < 0.5 * z * z + d - d * v + d * log(v)) return d * v;
  }
}
