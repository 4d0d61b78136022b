import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError } from './errors';
import { type VolumeModelInputs, volumeModel } from './gravimetric';
import { sampleStandardDeviation } from './statistics';
import { tanakaAirFreeDensity } from './water-density';
import {
  type BudgetInput,
  type BudgetModel,
  type CoverageOptions,
  type Distribution,
  type UncertaintyBudget,
  buildBudget,
  rectangularStandardUncertainty,
  triangularStandardUncertainty,
} from './uncertainty';

/**
 * Uncertainty of a gravimetric volume, after the component list of EURAMET
 * Calibration Guide No. 19 (cg-19, version 3.0, 2018): mass (balance
 * calibration, resolution, repeatability), water temperature, water density,
 * air density, weight density, expansion coefficient, meniscus, evaporation.
 *
 * Model: V = volumeModel(m + δm_res, t, ρ_W + [ρ_W(t) − ρ_W(t̄)] + δρ_W, ρ_A, ρ_B, γ)
 *            + δV_rep + δV_men + δV_evap,
 * so u(t) acts both through ρ_W(t) and through γ(t − t_ref). Sensitivity
 * coefficients come from central differences on that Decimal model.
 *
 * Defaults, used only when the caller gives nothing (each row says so in its note):
 * - δρ_W: 4.5e-4 kg/m³, the standard uncertainty Tanaka et al. (Metrologia 38,
 *   2001) state for their formula (from memory; not re-read from the paper);
 * - ρ_B: ±60 kg/m³ rectangular around the conventional 8000 kg/m³ (OIML R 111-1
 *   density class limits; from memory, not verified);
 * - γ: ±10 % of γ, rectangular (cg-19 practice; from memory, not verified).
 * Water purity and dissolved air are not separate rows: fold them into δρ_W.
 */
export interface VolumeStandardUncertainties {
  /** Standard uncertainty of a net mass from the balance certificate, g. */
  readonly balanceCalibrationG: DecimalInput;
  /** Scale interval d, g. Two readings (filled and empty or tare): u = d/√12·√2 = d/√6. */
  readonly balanceResolutionG: DecimalInput;
  /** Thermometer standard uncertainty, °C. */
  readonly waterTemperatureC: DecimalInput;
  readonly waterDensityKgPerM3?: DecimalInput;
  /** From the air-density formula and the measured conditions, kg/m³. */
  readonly airDensityKgPerM3: DecimalInput;
  readonly weightDensityKgPerM3?: DecimalInput;
  readonly expansionCoefficientPerK?: DecimalInput;
  /** Meniscus reading, as a volume (mL); treated as rectangular in Monte Carlo. */
  readonly meniscusMl: DecimalInput;
  /** Evaporation during the weighing, as a volume (mL); may be 0. */
  readonly evaporationMl: DecimalInput;
}

export interface VolumeUncertaintyInput {
  /** Means of the model inputs; netMassG is the mean net mass. */
  readonly model: VolumeModelInputs;
  /** ρ_W(t) in kg/m³, for the temperature effect on water density; default Tanaka et al. 2001 (air-free). */
  readonly waterDensityAtC?: (temperatureC: Decimal) => Decimal;
  /** Replicate volumes, mL: repeatability u = s/√n with ν = n − 1 (JCGM 100 4.2.3). */
  readonly replicateVolumesMl: readonly DecimalInput[];
  /** Their sample standard deviation, when the caller already has it. */
  readonly replicateStandardDeviationMl?: Decimal;
  readonly uncertainties: VolumeStandardUncertainties;
  readonly coverage?: CoverageOptions;
}

export interface VolumeUncertaintyResult {
  readonly budget: UncertaintyBudget;
  readonly volumeMl: Decimal;
  readonly combinedStandardUncertaintyMl: Decimal;
  readonly effectiveDegreesOfFreedom: Decimal;
  readonly coverageFactor: Decimal;
  readonly expandedUncertaintyMl: Decimal;
  /** 100·U/V. */
  readonly relativeExpandedUncertaintyPercent: Decimal;
}

export const DEFAULT_WATER_DENSITY_FORMULA_U_KG_PER_M3 = new Decimal('4.5e-4');
export const DEFAULT_WEIGHT_DENSITY_HALF_WIDTH_KG_PER_M3 = new Decimal(60);
export const DEFAULT_EXPANSION_COEFFICIENT_RELATIVE_HALF_WIDTH = new Decimal('0.1');

/** The budget rows, the Decimal model and a binary-float twin for Monte Carlo. */
export function volumeBudgetInputs(input: VolumeUncertaintyInput): {
  inputs: BudgetInput[];
  model: BudgetModel;
  numberModel: (x: Readonly<Record<string, number>>) => number;
} {
  const m = input.model;
  const u = input.uncertainties;
  const nonNegative = (v: DecimalInput, field: string) => {
    const x = dec(v, `uncertainties.${field}`);
    if (x.isNegative()) throw new MetrologyInputError(`uncertainties.${field}`, 'must not be negative');
    return x;
  };
  const rep = repeatability(input.replicateVolumesMl, input.replicateStandardDeviationMl);
  const rhoW0 = m.waterDensityKgPerM3;
  const t0 = m.waterTemperatureC;
  const rhoOf = input.waterDensityAtC ?? tanakaAirFreeDensity;
  const rhoAt = rhoOf(t0);
  const uRhoW =
    u.waterDensityKgPerM3 === undefined
      ? DEFAULT_WATER_DENSITY_FORMULA_U_KG_PER_M3
      : nonNegative(u.waterDensityKgPerM3, 'waterDensityKgPerM3');
  const uRhoB =
    u.weightDensityKgPerM3 === undefined
      ? rectangularStandardUncertainty(DEFAULT_WEIGHT_DENSITY_HALF_WIDTH_KG_PER_M3)
      : nonNegative(u.weightDensityKgPerM3, 'weightDensityKgPerM3');
  const uGamma =
    u.expansionCoefficientPerK === undefined
      ? rectangularStandardUncertainty(m.expansionCoefficientPerK.times(DEFAULT_EXPANSION_COEFFICIENT_RELATIVE_HALF_WIDTH))
      : nonNegative(u.expansionCoefficientPerK, 'expansionCoefficientPerK');
  const byDefault = (given: unknown, text: string) => (given === undefined ? { note: `default: ${text}` } : {});

  const row = (quantity: string, symbol: string, unit: string, value: DecimalInput, su: Decimal, distribution: Distribution) =>
    ({ quantity, symbol, unit, value, standardUncertainty: su, distribution }) satisfies BudgetInput;
  const uRes = triangularStandardUncertainty(nonNegative(u.balanceResolutionG, 'balanceResolutionG'));
  const inputs: BudgetInput[] = [
    row('Mass of water (balance calibration)', 'm', 'g', m.netMassG, nonNegative(u.balanceCalibrationG, 'balanceCalibrationG'), 'normal'),
    row('Balance resolution (two readings)', 'dmRes', 'g', 0, uRes, 'triangular'),
    row('Water temperature', 't', '°C', t0, nonNegative(u.waterTemperatureC, 'waterTemperatureC'), 'normal'),
    { ...row('Water density (formula)', 'dRhoW', 'kg/m³', 0, uRhoW, 'normal'), ...byDefault(u.waterDensityKgPerM3, 'Tanaka et al. 2001') },
    row('Air density', 'rhoA', 'kg/m³', m.airDensityKgPerM3, nonNegative(u.airDensityKgPerM3, 'airDensityKgPerM3'), 'normal'),
    {
      ...row('Density of the weights', 'rhoB', 'kg/m³', m.weightDensityKgPerM3, uRhoB, 'rectangular'),
      ...byDefault(u.weightDensityKgPerM3, '±60 kg/m³ rectangular'),
    },
    {
      ...row('Cubic expansion coefficient', 'gamma', '1/K', m.expansionCoefficientPerK, uGamma, 'rectangular'),
      ...byDefault(u.expansionCoefficientPerK, '±10 % of γ rectangular'),
    },
    // The last three enter the model as added volumes: their sensitivity is exactly 1.
    { ...row('Repeatability (replicate volumes)', 'dVrep', 'mL', 0, rep.u, 'type-a'), degreesOfFreedom: rep.nu, sensitivityCoefficient: 1 },
    { ...row('Meniscus reading', 'dVmen', 'mL', 0, nonNegative(u.meniscusMl, 'meniscusMl'), 'rectangular'), sensitivityCoefficient: 1 },
    { ...row('Evaporation', 'dVevap', 'mL', 0, nonNegative(u.evaporationMl, 'evaporationMl'), 'rectangular'), sensitivityCoefficient: 1 },
  ];

  const model: BudgetModel = (x) => {
    const g = (k: string) => x[k] as Decimal;
    // Only the temperature row moves t: the other evaluations reuse rho(t0) instead of recomputing it.
    const t = g('t');
    const rhoW = rhoW0.plus((t.equals(t0) ? rhoAt : rhoOf(t)).minus(rhoAt)).plus(g('dRhoW'));
    return volumeModel({
      ...m,
      netMassG: g('m').plus(g('dmRes')),
      waterTemperatureC: t,
      waterDensityKgPerM3: rhoW,
      airDensityKgPerM3: g('rhoA'),
      weightDensityKgPerM3: g('rhoB'),
      expansionCoefficientPerK: g('gamma'),
    })
      .plus(g('dVrep'))
      .plus(g('dVmen'))
      .plus(g('dVevap'));
  };

  // Binary-float twin: ρ_W(t) linearised at t̄ (the curvature, ≈ −0.008 kg/m³/K²,
  // moves ρ_W by < 1e-4 kg/m³ for |t − t̄| < 0.15 K, below the formula uncertainty).
  const h = new Decimal('0.001');
  const slope = rhoOf(t0.plus(h))
    .minus(rhoOf(t0.minus(h)))
    .div(h.times(2))
    .toNumber();
  const rhoW0n = rhoW0.toNumber();
  const t0n = t0.toNumber();
  const tRef = m.referenceTemperatureC.toNumber();
  const numberModel = (x: Readonly<Record<string, number>>): number => {
    const v = (k: string) => x[k] as number;
    const rhoW = (rhoW0n + slope * (v('t') - t0n) + v('dRhoW')) / 1000;
    const rhoA = v('rhoA') / 1000;
    const rhoB = v('rhoB') / 1000;
    const volume = ((v('m') + v('dmRes')) / (rhoW - rhoA)) * (1 - rhoA / rhoB) * (1 - v('gamma') * (v('t') - tRef));
    return volume + v('dVrep') + v('dVmen') + v('dVevap');
  };
  return { inputs, model, numberModel };
}

/** The cg-19 budget of one gravimetric calibration point, with U and relative U. */
export function evaluateVolumeUncertainty(input: VolumeUncertaintyInput): VolumeUncertaintyResult {
  const { inputs, model } = volumeBudgetInputs(input);
  const budget = buildBudget(inputs, { model, ...(input.coverage ? { coverage: input.coverage } : {}) });
  const volume = budget.estimate as Decimal;
  if (volume.lte(0)) throw new MetrologyInputError('model.netMassG', 'gives a volume that is not positive');
  return {
    budget,
    volumeMl: volume,
    combinedStandardUncertaintyMl: budget.combinedStandardUncertainty,
    effectiveDegreesOfFreedom: budget.effectiveDegreesOfFreedom,
    coverageFactor: budget.coverageFactor,
    expandedUncertaintyMl: budget.expandedUncertainty,
    relativeExpandedUncertaintyPercent: budget.expandedUncertainty.div(volume).times(100),
  };
}

function repeatability(values: readonly DecimalInput[], known?: Decimal): { u: Decimal; nu: Decimal } {
  if (values.length < 2) throw new MetrologyInputError('replicateVolumesMl', 'needs at least 2 replicates for repeatability');
  const s = known ?? sampleStandardDeviation(values, 'replicateVolumesMl');
  return { u: s.div(new Decimal(values.length).sqrt()), nu: new Decimal(values.length - 1) };
}
