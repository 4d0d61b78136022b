import { REFERENCE_WEIGHT_DENSITY_KG_PER_M3 } from './buoyancy';
import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError, type MetrologyWarning } from './errors';
import { resolveExpansionCoefficient } from './materials';
import { waterDensity } from './water-density';

/*
 * Gravimetric volume at a reference temperature (ISO 4787; ISO 8655-6 for piston pipettes):
 *   V_ref = m_net / (rhoW - rhoA) * (1 - rhoA/rhoB) * [1 - gamma (t - t_ref)]
 * with densities in kg/m3 turned into g/mL by / 1000, so V is in mL for m in g.
 *   Z = (1 / (rhoW - rhoA)) (1 - rhoA/rhoB), mL/g.
 */
export const DEFAULT_REFERENCE_TEMPERATURE_C = new Decimal(20);
const ONE = new Decimal(1);
const KG_PER_M3_PER_G_PER_ML = new Decimal(1000);

/** Every input of the volume model, already as Decimals (for sensitivity coefficients and Monte Carlo). */
export interface VolumeModelInputs {
  readonly netMassG: Decimal;
  readonly waterTemperatureC: Decimal;
  readonly waterDensityKgPerM3: Decimal;
  readonly airDensityKgPerM3: Decimal;
  readonly weightDensityKgPerM3: Decimal;
  readonly expansionCoefficientPerK: Decimal;
  readonly referenceTemperatureC: Decimal;
}

/**
 * The measurement model: volume in mL at the reference temperature. Plain arithmetic with no
 * range checks, so that perturbed inputs (sensitivity, Monte Carlo) pass through; only a
 * model that cannot be evaluated (rhoW = rhoA or rhoB = 0) is refused.
 */
export function volumeModel(i: VolumeModelInputs): Decimal {
  const densityDifference = i.waterDensityKgPerM3.minus(i.airDensityKgPerM3);
  if (densityDifference.isZero()) throw new MetrologyInputError('waterDensityKgPerM3', 'must differ from the air density');
  if (i.weightDensityKgPerM3.isZero()) throw new MetrologyInputError('weightDensityKgPerM3', 'must not be 0');
  return i.netMassG
    .times(KG_PER_M3_PER_G_PER_ML)
    .div(densityDifference)
    .times(ONE.minus(i.airDensityKgPerM3.div(i.weightDensityKgPerM3)))
    .times(ONE.minus(i.expansionCoefficientPerK.times(i.waterTemperatureC.minus(i.referenceTemperatureC))));
}

export interface ZFactorInput {
  readonly waterTemperatureC: DecimalInput;
  readonly airDensityKgPerM3: DecimalInput;
  /** Default 8000 kg/m3 (OIML R 111-1 convention). */
  readonly weightDensityKgPerM3?: DecimalInput;
  /** Default: Tanaka et al. (2001), air-free, 101 325 Pa, at waterTemperatureC. */
  readonly waterDensityKgPerM3?: DecimalInput;
}

export interface ZFactorResult {
  readonly zMlPerG: Decimal;
  readonly waterDensityKgPerM3: Decimal;
  readonly airDensityKgPerM3: Decimal;
  readonly weightDensityKgPerM3: Decimal;
  readonly warnings: MetrologyWarning[];
}

/** Z = (1/(rhoW - rhoA)) (1 - rhoA/rhoB) in mL/g; refuses rhoA < 0, rhoW <= rhoA, rhoB <= rhoA. */
export function zFactor(input: ZFactorInput): ZFactorResult {
  const t = dec(input.waterTemperatureC, 'waterTemperatureC');
  const rhoA = dec(input.airDensityKgPerM3, 'airDensityKgPerM3');
  if (rhoA.isNegative()) throw new MetrologyInputError('airDensityKgPerM3', 'must not be negative', { min: '0', unit: 'kg/m3' });
  const warnings: MetrologyWarning[] = [];
  let rhoW: Decimal;
  if (input.waterDensityKgPerM3 === undefined) {
    const w = waterDensity({ temperatureC: t });
    warnings.push(...w.warnings);
    rhoW = w.densityKgPerM3;
  } else {
    rhoW = dec(input.waterDensityKgPerM3, 'waterDensityKgPerM3');
  }
  const rhoB =
    input.weightDensityKgPerM3 === undefined ? REFERENCE_WEIGHT_DENSITY_KG_PER_M3 : dec(input.weightDensityKgPerM3, 'weightDensityKgPerM3');
  for (const [field, value] of [
    ['waterDensityKgPerM3', rhoW],
    ['weightDensityKgPerM3', rhoB],
  ] as const) {
    if (value.lessThanOrEqualTo(rhoA)) {
      throw new MetrologyInputError(field, `must be greater than the air density (${rhoA.toString()} kg/m3)`, {
        min: rhoA.toString(),
        unit: 'kg/m3',
      });
    }
  }
  const z = KG_PER_M3_PER_G_PER_ML.div(rhoW.minus(rhoA)).times(ONE.minus(rhoA.div(rhoB)));
  return { zMlPerG: z, waterDensityKgPerM3: rhoW, airDensityKgPerM3: rhoA, weightDensityKgPerM3: rhoB, warnings };
}

/** Balance readings of one replicate, in g. */
export type ReplicateReadings =
  /** Adjusted to contain: the vessel weighed filled to the mark and empty. */
  | { readonly mode: 'contain'; readonly filledG: DecimalInput; readonly emptyG: DecimalInput }
  /** Adjusted to deliver: the weighing vessel before and after receiving the delivery. */
  | { readonly mode: 'deliver'; readonly beforeG: DecimalInput; readonly afterG: DecimalInput };

/** Net mass of water of one replicate; refuses negative readings and a non-positive net mass. */
export function netMassG(readings: ReplicateReadings): Decimal {
  const [lowField, highField, low, high] =
    readings.mode === 'contain'
      ? (['emptyG', 'filledG', readings.emptyG, readings.filledG] as const)
      : (['beforeG', 'afterG', readings.beforeG, readings.afterG] as const);
  const lo = dec(low, lowField);
  const hi = dec(high, highField);
  for (const [field, v] of [
    [lowField, lo],
    [highField, hi],
  ] as const) {
    if (v.isNegative()) throw new MetrologyInputError(field, 'must not be negative', { min: '0', unit: 'g' });
  }
  if (hi.lessThanOrEqualTo(lo)) {
    throw new MetrologyInputError(highField, `must be greater than ${lowField} (the net mass of water must be positive)`);
  }
  return hi.minus(lo);
}

export interface ReplicateVolumeInput extends ZFactorInput {
  readonly readings: ReplicateReadings;
  /** A material id from the materials table, or ... */
  readonly material?: string;
  /** ... the vessel's cubic expansion coefficient in 1/K (exactly one of the two). */
  readonly expansionCoefficientPerK?: DecimalInput;
  /** Default 20 °C. */
  readonly referenceTemperatureC?: DecimalInput;
}

export interface ReplicateVolumeResult {
  readonly volumeMl: Decimal;
  readonly netMassG: Decimal;
  readonly zMlPerG: Decimal;
  /** The model inputs actually used, ready for an uncertainty evaluation. */
  readonly modelInputs: VolumeModelInputs;
  readonly expansionCoefficientSource: string;
  readonly warnings: MetrologyWarning[];
}

/** Volume of one replicate at the reference temperature, mL. */
export function replicateVolume(input: ReplicateVolumeInput): ReplicateVolumeResult {
  const m = netMassG(input.readings);
  const z = zFactor(input);
  const gamma = resolveExpansionCoefficient({ material: input.material, expansionCoefficientPerK: input.expansionCoefficientPerK });
  const modelInputs: VolumeModelInputs = {
    netMassG: m,
    waterTemperatureC: dec(input.waterTemperatureC, 'waterTemperatureC'),
    waterDensityKgPerM3: z.waterDensityKgPerM3,
    airDensityKgPerM3: z.airDensityKgPerM3,
    weightDensityKgPerM3: z.weightDensityKgPerM3,
    expansionCoefficientPerK: gamma.expansionCoefficientPerK,
    referenceTemperatureC:
      input.referenceTemperatureC === undefined
        ? DEFAULT_REFERENCE_TEMPERATURE_C
        : dec(input.referenceTemperatureC, 'referenceTemperatureC'),
  };
  return {
    volumeMl: volumeModel(modelInputs),
    netMassG: m,
    zMlPerG: z.zMlPerG,
    modelInputs,
    expansionCoefficientSource: gamma.source,
    warnings: z.warnings,
  };
}
