import { Decimal, MetrologyInputError } from '@registry/metrology';

/*
 * Applying a personal factor to a reading: pure arithmetic over decimal.js.
 *
 * One-mark ware (a single factor): the vessel delivers or contains only its
 * nominal volume, so the indicated volume must be the nominal volume and
 *   V20 = nominal × factor.
 *
 * Graduated ware (a curve of calibrated points, ascending): the correction is
 * interpolated linearly between the two neighbouring points x_i ≤ x ≤ x_(i+1):
 *   c(x) = c_i + (c_(i+1) − c_i) · (x − x_i) / (x_(i+1) − x_i),   V20 = x + c(x),
 * never extrapolated beyond the first or last point. The expanded uncertainty is
 * the larger of the two neighbouring points' U: a conservative choice (the
 * points' uncertainties are mostly correlated, through the same balance, water
 * and person, so interpolating U would understate it between points that differ).
 * At a calibrated point exactly, that point's correction and U.
 */

/** One point of a stored correction curve (decimal strings). */
export interface CurvePoint {
  readonly nominalVolumeMl: string;
  readonly meanVolumeMl: string;
  readonly correctionMl: string;
  readonly expandedUncertaintyMl: string;
}

export type CorrectionMethod = 'ratio' | 'curve-point' | 'curve-interpolation' | 'nominal-fallback';

export interface AppliedCorrection {
  readonly method: CorrectionMethod;
  readonly correctionMl: Decimal;
  /** The volume delivered (or contained) at the reference temperature, 20 °C. */
  readonly correctedVolumeMl: Decimal;
  readonly expandedUncertaintyMl: Decimal;
  /** The neighbouring calibrated points used by a curve (the same point twice at a calibrated point). */
  readonly between: { readonly lower: CurvePoint; readonly upper: CurvePoint } | null;
}

const FIELD = 'indicatedVolumeMl';

function mustBeNominal(indicated: Decimal, nominal: Decimal): void {
  if (!indicated.equals(nominal)) {
    throw new MetrologyInputError(
      FIELD,
      `must be the nominal volume, ${nominal.toFixed()} mL: one-mark ware delivers (or contains) only its nominal volume`,
      { min: nominal.toFixed(), max: nominal.toFixed(), unit: 'mL' },
    );
  }
}

/** One-mark ware: nominal × factor, with the factor's expanded uncertainty. */
export function applyRatio(input: {
  readonly indicatedVolumeMl: Decimal;
  readonly nominalVolumeMl: Decimal;
  readonly factor: Decimal;
  readonly expandedUncertaintyMl: Decimal;
}): AppliedCorrection {
  mustBeNominal(input.indicatedVolumeMl, input.nominalVolumeMl);
  const corrected = input.nominalVolumeMl.times(input.factor);
  return {
    method: 'ratio',
    correctionMl: corrected.minus(input.nominalVolumeMl),
    correctedVolumeMl: corrected,
    expandedUncertaintyMl: input.expandedUncertaintyMl,
    between: null,
  };
}

/** Graduated ware: linear interpolation of the correction between neighbouring points; refuses to extrapolate. */
export function interpolateCurve(points: readonly CurvePoint[], indicatedVolumeMl: Decimal): AppliedCorrection {
  const sorted = [...points].sort((a, b) => new Decimal(a.nominalVolumeMl).comparedTo(b.nominalVolumeMl));
  const first = sorted[0];
  const last = sorted[sorted.length - 1];
  if (!first || !last) throw new Error('a correction curve has at least two points');
  const x = indicatedVolumeMl;
  if (x.lessThan(first.nominalVolumeMl) || x.greaterThan(last.nominalVolumeMl)) {
    const min = new Decimal(first.nominalVolumeMl).toFixed();
    const max = new Decimal(last.nominalVolumeMl).toFixed();
    throw new MetrologyInputError(
      FIELD,
      `is outside the calibrated range, ${min} to ${max} mL: the correction curve is never extrapolated beyond its calibrated points`,
      { min, max, unit: 'mL' },
    );
  }
  for (let i = 0; i < sorted.length; i++) {
    const lower = sorted[i] as CurvePoint;
    const xl = new Decimal(lower.nominalVolumeMl);
    if (x.equals(xl)) {
      const c = new Decimal(lower.correctionMl);
      return {
        method: 'curve-point',
        correctionMl: c,
        correctedVolumeMl: x.plus(c),
        expandedUncertaintyMl: new Decimal(lower.expandedUncertaintyMl),
        between: { lower, upper: lower },
      };
    }
    const upper = sorted[i + 1];
    if (upper && x.lessThan(upper.nominalVolumeMl)) {
      const xu = new Decimal(upper.nominalVolumeMl);
      const cl = new Decimal(lower.correctionMl);
      const cu = new Decimal(upper.correctionMl);
      const c = cl.plus(cu.minus(cl).times(x.minus(xl)).div(xu.minus(xl)));
      return {
        method: 'curve-interpolation',
        correctionMl: c,
        correctedVolumeMl: x.plus(c),
        expandedUncertaintyMl: Decimal.max(lower.expandedUncertaintyMl, upper.expandedUncertaintyMl),
        between: { lower, upper },
      };
    }
  }
  throw new Error('unreachable: x lies within the curve');
}

/**
 * No factor, and the caller asked for the nominal value: the indicated volume
 * uncorrected, with the vessel's acceptance limit (class MPE or the lab's own)
 * standing in for its uncertainty. One-mark ware still accepts only its nominal volume;
 * graduated ware any volume up to the nominal.
 */
export function nominalFallback(input: {
  readonly indicatedVolumeMl: Decimal;
  readonly nominalVolumeMl: Decimal;
  readonly oneMark: boolean;
  readonly limitMl: Decimal;
}): AppliedCorrection {
  if (input.oneMark) mustBeNominal(input.indicatedVolumeMl, input.nominalVolumeMl);
  else if (input.indicatedVolumeMl.greaterThan(input.nominalVolumeMl)) {
    throw new MetrologyInputError(FIELD, `must not exceed the nominal volume, ${input.nominalVolumeMl.toFixed()} mL`, {
      max: input.nominalVolumeMl.toFixed(),
      unit: 'mL',
    });
  }
  return {
    method: 'nominal-fallback',
    correctionMl: new Decimal(0),
    correctedVolumeMl: input.indicatedVolumeMl,
    expandedUncertaintyMl: input.limitMl,
    between: null,
  };
}

/** Liquid temperatures the linear expansion model is used for, °C. */
export const LIQUID_TEMPERATURE_RANGE_C = { min: '0', max: '50' } as const;

export interface AtLiquidTemperature {
  /** 1 + γ (t − t_ref). */
  readonly expansionFactor: Decimal;
  readonly volumeMl: Decimal;
  readonly expandedUncertaintyMl: Decimal;
}

/**
 * The volume the vessel delivers (or contains) when the glass is at the liquid's
 * temperature t instead of the reference temperature t_ref (common practice: the
 * vessel has taken the liquid's temperature). By the definition of the cubic
 * expansion coefficient γ, the vessel's volume at t is
 *   V_t = V_ref · [1 + γ (t − t_ref)],
 * the first-order inverse of the ISO 4787 reference term V_ref = V_t · [1 − γ (t − t_ref)].
 * The result is a volume of liquid at t: the liquid's own expansion between t and
 * t_ref is not applied (it depends on the liquid, which the service does not know).
 * The uncertainty is scaled by the same factor; γ's own uncertainty is negligible here.
 */
export function atLiquidTemperature(input: {
  readonly volumeMl: Decimal;
  readonly expandedUncertaintyMl: Decimal;
  readonly expansionCoefficientPerK: Decimal;
  readonly liquidTemperatureC: Decimal;
  readonly referenceTemperatureC: Decimal;
}): AtLiquidTemperature {
  const t = input.liquidTemperatureC;
  if (t.lessThan(LIQUID_TEMPERATURE_RANGE_C.min) || t.greaterThan(LIQUID_TEMPERATURE_RANGE_C.max)) {
    throw new MetrologyInputError(
      'liquidTemperatureC',
      `must be between ${LIQUID_TEMPERATURE_RANGE_C.min} and ${LIQUID_TEMPERATURE_RANGE_C.max} °C for the linear expansion model`,
      { ...LIQUID_TEMPERATURE_RANGE_C, unit: '°C' },
    );
  }
  const expansionFactor = new Decimal(1).plus(input.expansionCoefficientPerK.times(t.minus(input.referenceTemperatureC)));
  return {
    expansionFactor,
    volumeMl: input.volumeMl.times(expansionFactor),
    expandedUncertaintyMl: input.expandedUncertaintyMl.times(expansionFactor),
  };
}
