import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError } from './errors';
import { studentTTwoSided } from './statistics-quantiles';

/**
 * Generic GUM uncertainty budget (JCGM 100:2008): first-order law of propagation
 * for uncorrelated inputs (5.1.2), Welch–Satterthwaite effective degrees of
 * freedom (G.4.1) and coverage factor from the t-distribution (G.6.4).
 *
 * Coverage rule (our decision, stated on every budget as `coverageRule`):
 * - k = t_p(ν) with ν = ν_eff truncated to the next lower integer (G.4.1 note,
 *   G.6.4) and p the two-sided coverage probability, default 0.95;
 * - at p = 0.95 and ν_eff ≥ 50 the conventional k = 2 is stated instead, as
 *   calibration certificates do (JCGM 100 G.6.6; EA-4/02 reports k = 2 for
 *   "approximately 95 %"). t_0.95(50) = 2.01, so the switch moves k by < 0.5 %
 *   and never understates it (t_0.95(∞) = 1.96). Pass `conventionalKFromDof:
 *   null` for the pure t rule.
 * k is rounded to two decimals, as printed in JCGM 100 Table G.2.
 */
export type Distribution = 'normal' | 'rectangular' | 'triangular' | 'type-a';

/** ν = ∞: the value of `degreesOfFreedom` for an exactly known Type B component. */
export const INFINITE_DOF: Decimal = new Decimal(Infinity);

export interface BudgetInput {
  readonly quantity: string;
  readonly symbol: string;
  readonly unit: string;
  readonly value: DecimalInput;
  readonly standardUncertainty: DecimalInput;
  readonly distribution: Distribution;
  /** Required for 'type-a'; ∞ for the others unless stated (JCGM 100 G.4.2). */
  readonly degreesOfFreedom?: DecimalInput;
  /** c_i = ∂f/∂x_i; computed from `model` by central differences when absent. */
  readonly sensitivityCoefficient?: DecimalInput;
  readonly note?: string;
}

export interface BudgetRow {
  readonly quantity: string;
  readonly symbol: string;
  readonly unit: string;
  readonly value: Decimal;
  readonly standardUncertainty: Decimal;
  readonly distribution: Distribution;
  readonly degreesOfFreedom: Decimal;
  readonly sensitivityCoefficient: Decimal;
  /** |c_i · u(x_i)|, in the unit of the output. */
  readonly contribution: Decimal;
  /** contribution² / u_c², between 0 and 1. */
  readonly share: Decimal;
  readonly note?: string;
}

export interface UncertaintyBudget {
  readonly rows: readonly BudgetRow[];
  /** f(x_1 … x_N) when a model was given, otherwise null. */
  readonly estimate: Decimal | null;
  readonly combinedStandardUncertainty: Decimal;
  /** May be Infinity (every component of infinite degrees of freedom). */
  readonly effectiveDegreesOfFreedom: Decimal;
  readonly coverageProbability: Decimal;
  readonly coverageFactor: Decimal;
  readonly expandedUncertainty: Decimal;
  readonly coverageRule: string;
}

export type BudgetModel = (x: Readonly<Record<string, Decimal>>) => Decimal;

export interface CoverageOptions {
  /** Two-sided coverage probability, 0 < p < 1; default 0.95. */
  readonly probability?: DecimalInput;
  /** ν_eff from which k = 2 is stated at p = 0.95; null disables. Default 50. */
  readonly conventionalKFromDof?: number | null;
}

export interface BudgetOptions {
  readonly model?: BudgetModel;
  readonly coverage?: CoverageOptions;
  /** Central-difference step h = relativeStep·|x| (or ·u(x) when x = 0, or absolute when both are 0). Default 1e-8. */
  readonly relativeStep?: DecimalInput;
}

const SQRT3 = new Decimal(3).sqrt();
const SQRT6 = new Decimal(6).sqrt();

/** u = a/√3 for a rectangular distribution of half-width a (JCGM 100 4.3.7). */
export function rectangularStandardUncertainty(halfWidth: DecimalInput): Decimal {
  return dec(halfWidth, 'halfWidth').abs().div(SQRT3);
}

/** u = a/√6 for a symmetric triangular distribution of half-width a (JCGM 100 4.3.9). */
export function triangularStandardUncertainty(halfWidth: DecimalInput): Decimal {
  return dec(halfWidth, 'halfWidth').abs().div(SQRT6);
}

/** c = (f(x+h) − f(x−h)) / 2h, other inputs held at their estimates. */
export function centralDifference(model: BudgetModel, point: Readonly<Record<string, Decimal>>, symbol: string, step: Decimal): Decimal {
  const x = point[symbol];
  if (x === undefined) throw new MetrologyInputError(symbol, 'is not an input of the model');
  const up = model({ ...point, [symbol]: x.plus(step) });
  const down = model({ ...point, [symbol]: x.minus(step) });
  return up.minus(down).div(step.times(2));
}

/** ν_eff = u_c⁴ / Σ (c_i u_i)⁴/ν_i (JCGM 100 G.2b); Infinity when every ν_i is. */
export function welchSatterthwaite(components: readonly { contribution: Decimal; degreesOfFreedom: Decimal }[]): Decimal {
  let variance = new Decimal(0);
  let denominator = new Decimal(0);
  for (const c of components) {
    const v = c.contribution.pow(2);
    variance = variance.plus(v);
    if (c.degreesOfFreedom.isFinite() && !v.isZero()) denominator = denominator.plus(v.pow(2).div(c.degreesOfFreedom));
  }
  return denominator.isZero() ? INFINITE_DOF : variance.pow(2).div(denominator);
}

/** Coverage factor for ν_eff under the rule documented at the top of this file. */
export function coverageFactor(effectiveDof: Decimal, options: CoverageOptions = {}): { k: Decimal; probability: Decimal; rule: string } {
  const p = dec(options.probability ?? '0.95', 'coverageProbability');
  if (p.lte(0) || p.gte(1)) throw new MetrologyInputError('coverageProbability', 'must be between 0 and 1 (exclusive)');
  const threshold = options.conventionalKFromDof === undefined ? 50 : options.conventionalKFromDof;
  const pct = p.times(100).toString();
  if (threshold !== null && p.eq('0.95') && effectiveDof.gte(threshold)) {
    return { k: new Decimal(2), probability: p, rule: `k = 2 (conventional) since ν_eff ≥ ${threshold}, p ≈ ${pct} %` };
  }
  const nu = effectiveDof.isFinite() ? effectiveDof.floor() : effectiveDof;
  if (nu.lt(1)) throw new MetrologyInputError('degreesOfFreedom', 'effective degrees of freedom must be at least 1');
  const k = studentTTwoSided(p, nu).toDecimalPlaces(2, Decimal.ROUND_HALF_UP);
  const nuText = nu.isFinite() ? nu.toString() : '∞';
  return { k, probability: p, rule: `k = t_p(ν) with p = ${pct} %, ν = ${nuText} (JCGM 100 G.6.4)` };
}

/** Builds the budget, u_c, ν_eff, k and U = k·u_c. */
export function buildBudget(inputs: readonly BudgetInput[], options: BudgetOptions = {}): UncertaintyBudget {
  if (inputs.length === 0) throw new MetrologyInputError('inputs', 'must hold at least one component');
  const relStep = dec(options.relativeStep ?? '1e-8', 'relativeStep');
  const point: Record<string, Decimal> = {};
  for (const row of inputs) {
    if (row.symbol in point) throw new MetrologyInputError(row.symbol, 'appears twice in the budget');
    point[row.symbol] = dec(row.value, `${row.symbol}.value`);
  }
  const partial = inputs.map((row) => {
    const value = point[row.symbol] as Decimal;
    const u = dec(row.standardUncertainty, `${row.symbol}.standardUncertainty`);
    if (u.isNegative()) throw new MetrologyInputError(`${row.symbol}.standardUncertainty`, 'must not be negative');
    const nu = degreesOfFreedomOf(row);
    let c: Decimal;
    if (row.sensitivityCoefficient !== undefined) c = dec(row.sensitivityCoefficient, `${row.symbol}.sensitivityCoefficient`);
    else if (options.model) {
      const base = !value.isZero() ? value.abs() : !u.isZero() ? u : new Decimal(1);
      c = centralDifference(options.model, point, row.symbol, base.times(relStep));
    } else throw new MetrologyInputError(`${row.symbol}.sensitivityCoefficient`, 'is required when no model is given');
    return { row, value, u, nu, c, contribution: c.times(u).abs() };
  });
  const variance = partial.reduce((s, r) => s.plus(r.contribution.pow(2)), new Decimal(0));
  const uc = variance.sqrt();
  const nuEff = welchSatterthwaite(partial.map((r) => ({ contribution: r.contribution, degreesOfFreedom: r.nu })));
  const { k, probability, rule } = coverageFactor(nuEff, options.coverage);
  const rows: BudgetRow[] = partial.map((r) => ({
    quantity: r.row.quantity,
    symbol: r.row.symbol,
    unit: r.row.unit,
    value: r.value,
    standardUncertainty: r.u,
    distribution: r.row.distribution,
    degreesOfFreedom: r.nu,
    sensitivityCoefficient: r.c,
    contribution: r.contribution,
    share: variance.isZero() ? new Decimal(0) : r.contribution.pow(2).div(variance),
    ...(r.row.note !== undefined ? { note: r.row.note } : {}),
  }));
  return {
    rows,
    estimate: options.model ? options.model(point) : null,
    combinedStandardUncertainty: uc,
    effectiveDegreesOfFreedom: nuEff,
    coverageProbability: probability,
    coverageFactor: k,
    expandedUncertainty: k.times(uc),
    coverageRule: rule,
  };
}

function degreesOfFreedomOf(row: BudgetInput): Decimal {
  const field = `${row.symbol}.degreesOfFreedom`;
  if (row.degreesOfFreedom === undefined) {
    if (row.distribution === 'type-a') throw new MetrologyInputError(field, 'is required for a Type A component');
    return INFINITE_DOF;
  }
  let nu: Decimal;
  try {
    nu = new Decimal(row.degreesOfFreedom);
  } catch {
    throw new MetrologyInputError(field, 'is not a number');
  }
  if (nu.isNaN() || nu.lt(1)) throw new MetrologyInputError(field, 'must be at least 1 (or Infinity)');
  return nu;
}
