import { Decimal, dec, type DecimalInput } from './decimal';
import { MetrologyInputError } from './errors';
import { mean, sampleStandardDeviation } from './statistics';

/**
 * Balance performance checks.
 *
 * USP general chapter <41> "Balances": repeatability (2·s / m ≤ 0.10 %, s from
 * at least 10 weighings of one test weight, s replaced by 0.41 d when smaller),
 * accuracy (a test weight between 5 % and 100 % of capacity reads within
 * 0.10 % of its value) and the minimum weight 2000 · s (so at least 820 d).
 * USP <1251> describes the practice; the sensitivity and eccentricity checks
 * below follow it with limits the laboratory sets.
 */

export const USP41_LIMIT_PERCENT = new Decimal('0.10');
export const USP41_MIN_REPLICATES = 10;
export const USP41_SD_FLOOR_FACTOR = new Decimal('0.41');
export const USP41_MIN_WEIGHT_FACTOR = new Decimal(2000);

function positive(value: DecimalInput, field: string): Decimal {
  const d = dec(value, field);
  if (!d.greaterThan(0)) throw new MetrologyInputError(field, 'must be greater than 0');
  return d;
}

export interface RepeatabilityInput {
  /** At least 10 readings of one test weight, g. */
  readonly readingsG: readonly DecimalInput[];
  /** Nominal value of the test weight, g. */
  readonly testWeightG: DecimalInput;
  /** Readability d (scale interval), g. */
  readonly readabilityG: DecimalInput;
  /**
   * The smallest net weight the laboratory means to weigh, g. When given, the
   * criterion is 2·s / (smallest net weight) ≤ 0.10 % (USP <41> as revised in
   * 2014); otherwise it is taken relative to the test weight.
   */
  readonly smallestNetWeightG?: DecimalInput;
}

export interface RepeatabilityResult {
  readonly n: number;
  readonly meanG: Decimal;
  readonly standardDeviationG: Decimal;
  /** The s the criterion uses: max(s, 0.41 d). */
  readonly sUsedG: Decimal;
  readonly floorApplied: boolean;
  readonly referenceMassG: Decimal;
  readonly relativeTo: 'smallest-net-weight' | 'test-weight';
  /** 100 · 2 · s_used / reference mass. */
  readonly relativeRepeatabilityPercent: Decimal;
  readonly limitPercent: Decimal;
  /** 2000 · s_used (never below 820 d). */
  readonly minimumWeightG: Decimal;
  readonly pass: boolean;
}

export function usp41Repeatability(input: RepeatabilityInput): RepeatabilityResult {
  if (!Array.isArray(input.readingsG) || input.readingsG.length < USP41_MIN_REPLICATES) {
    throw new MetrologyInputError('readingsG', `needs at least ${USP41_MIN_REPLICATES} replicate weighings of one test weight (USP <41>)`, {
      min: String(USP41_MIN_REPLICATES),
      unit: 'readings',
    });
  }
  const d = positive(input.readabilityG, 'readabilityG');
  const testWeight = positive(input.testWeightG, 'testWeightG');
  const readings = input.readingsG.map((r, i) => dec(r, `readingsG[${i}]`));
  const s = sampleStandardDeviation(readings, 'readingsG');
  const floor = d.times(USP41_SD_FLOOR_FACTOR);
  const floorApplied = s.lessThan(floor);
  const sUsed = floorApplied ? floor : s;
  const smallestNet = input.smallestNetWeightG === undefined ? undefined : positive(input.smallestNetWeightG, 'smallestNetWeightG');
  const referenceMass = smallestNet ?? testWeight;
  const relative = sUsed.times(2).div(referenceMass).times(100);
  return {
    n: readings.length,
    meanG: mean(readings),
    standardDeviationG: s,
    sUsedG: sUsed,
    floorApplied,
    referenceMassG: referenceMass,
    relativeTo: smallestNet ? 'smallest-net-weight' : 'test-weight',
    relativeRepeatabilityPercent: relative,
    limitPercent: USP41_LIMIT_PERCENT,
    minimumWeightG: sUsed.times(USP41_MIN_WEIGHT_FACTOR),
    pass: relative.lessThanOrEqualTo(USP41_LIMIT_PERCENT),
  };
}

export interface AccuracyInput {
  readonly readingG: DecimalInput;
  /** Conventional mass of the test weight (certificate value), g. */
  readonly testWeightG: DecimalInput;
  /** Balance capacity, g; when given the test weight must be 5 %–100 % of it. */
  readonly capacityG?: DecimalInput;
  /** MPE or calibration uncertainty of the test weight, g; must be ≤ 1/3 of the test limit. */
  readonly testWeightMpeG?: DecimalInput;
}

export interface AccuracyResult {
  readonly deviationG: Decimal;
  readonly deviationPercent: Decimal;
  readonly limitPercent: Decimal;
  readonly limitG: Decimal;
  readonly pass: boolean;
}

export function usp41Accuracy(input: AccuracyInput): AccuracyResult {
  const reading = dec(input.readingG, 'readingG');
  const weight = positive(input.testWeightG, 'testWeightG');
  if (input.capacityG !== undefined) {
    const capacity = positive(input.capacityG, 'capacityG');
    const min = capacity.times('0.05');
    if (weight.lessThan(min) || weight.greaterThan(capacity)) {
      throw new MetrologyInputError('testWeightG', 'must be between 5 % and 100 % of the balance capacity (USP <41>)', {
        min: min.toString(),
        max: capacity.toString(),
        unit: 'g',
      });
    }
  }
  const limitG = weight.times(USP41_LIMIT_PERCENT).div(100);
  if (input.testWeightMpeG !== undefined && dec(input.testWeightMpeG, 'testWeightMpeG').greaterThan(limitG.div(3))) {
    throw new MetrologyInputError('testWeightMpeG', 'must not exceed one third of the accuracy limit (USP <41>)', {
      max: limitG.div(3).toString(),
      unit: 'g',
    });
  }
  const deviation = reading.minus(weight);
  const deviationPercent = deviation.div(weight).times(100);
  return {
    deviationG: deviation,
    deviationPercent,
    limitPercent: USP41_LIMIT_PERCENT,
    limitG,
    pass: deviationPercent.abs().lessThanOrEqualTo(USP41_LIMIT_PERCENT),
  };
}

export interface SensitivityInput {
  readonly readingG: DecimalInput;
  readonly referenceWeightG: DecimalInput;
  /** Laboratory limit on |reading − reference|, g. */
  readonly limitG: DecimalInput;
}

export interface SensitivityResult {
  readonly deviationG: Decimal;
  readonly deviationPercent: Decimal;
  readonly limitG: Decimal;
  readonly pass: boolean;
}

export function sensitivityCheck(input: SensitivityInput): SensitivityResult {
  const reading = dec(input.readingG, 'readingG');
  const reference = positive(input.referenceWeightG, 'referenceWeightG');
  const limit = positive(input.limitG, 'limitG');
  const deviation = reading.minus(reference);
  return {
    deviationG: deviation,
    deviationPercent: deviation.div(reference).times(100),
    limitG: limit,
    pass: deviation.abs().lessThanOrEqualTo(limit),
  };
}

export interface EccentricityInput {
  readonly centreReadingG: DecimalInput;
  /** Readings with the same load off centre (usually the four corners), g. */
  readonly offCentreReadingsG: readonly DecimalInput[];
  /** Laboratory limit on the largest |off-centre − centre|, g. */
  readonly limitG: DecimalInput;
}

export interface EccentricityResult {
  readonly deviationsG: readonly Decimal[];
  readonly maxDeviationG: Decimal;
  readonly maxDeviationIndex: number;
  readonly limitG: Decimal;
  readonly pass: boolean;
}

export function eccentricityCheck(input: EccentricityInput): EccentricityResult {
  const centre = dec(input.centreReadingG, 'centreReadingG');
  if (!Array.isArray(input.offCentreReadingsG) || input.offCentreReadingsG.length < 1) {
    throw new MetrologyInputError('offCentreReadingsG', 'needs at least one off-centre reading');
  }
  const limit = positive(input.limitG, 'limitG');
  const deviations = input.offCentreReadingsG.map((r, i) => dec(r, `offCentreReadingsG[${i}]`).minus(centre));
  let index = 0;
  deviations.forEach((dv, i) => {
    if (dv.abs().greaterThan((deviations[index] as Decimal).abs())) index = i;
  });
  const max = (deviations[index] as Decimal).abs();
  return { deviationsG: deviations, maxDeviationG: max, maxDeviationIndex: index, limitG: limit, pass: max.lessThanOrEqualTo(limit) };
}
