import {
  type GravimetricReplicateInput,
  METROLOGY_LIBRARY_VERSION,
  MetrologyInputError,
  type ReplicateReadings,
  type ToleranceLimit,
  type VesselKind,
  type AccuracyClass,
  evaluateGravimetricPoint,
  lookupTolerance,
  netMassG,
  waterDensity,
} from '@registry/metrology';

import { type ResolvedAir, requireAirBelowWater, resolveAir } from '../calculations/air';
import { type ApiWarning, renamed, renameWarnings, withFieldPaths } from '../calculations/field-paths';
import { presentGravimetric } from '../calculations/gravimetric.presenter';
import type { GravimetricVolumeRequest } from '../calculations/gravimetric.schemas';
import type { DeliveryMode } from '../vessels/vessel-rules';
import type { CalibrationInputs, CalibrationResults, Verdict } from './calibration.responses';

/**
 * The acceptance rule, stated in every result: each point is judged against
 * the vessel's own acceptance limit (the class-table limit of its nominal
 * volume, or the lab's override), never against the limit of a smaller
 * vessel. The class standards say so: ISO 385 (burettes), ISO 835 (graduated
 * pipettes) and ISO 4788 (cylinders) state the MPE "at any point of the scale",
 * and for variable piston pipettes ISO 8655-2 applies the nominal volume's
 * limits at every selected volume (see the tolerance tables' notes).
 */
export const ACCEPTANCE_RULE =
  "Every point is judged against the vessel's acceptance limit (class table at the nominal volume, or the lab's override); " +
  'the class MPE applies at any point of the scale.';

/** What the computation needs to know about the vessel and balance. */
export interface ComputationSubject {
  readonly vessel: {
    readonly kind: VesselKind;
    readonly accuracyClass: AccuracyClass;
    readonly classStandard: string | null;
    readonly nominalVolumeMl: string;
    readonly expansionCoefficientPerK: string;
    readonly limitMl: string | null;
    readonly limitSource: 'class-table' | 'lab-override' | 'none';
    readonly limitReason: string | null;
  };
  readonly deliveryMode: DeliveryMode;
  /** The balance record's adjustment-weight density, used unless the inputs give one. */
  readonly balanceWeightDensityKgPerM3: string;
}

export type ComputedResults = Omit<CalibrationResults, 'traceability'>;

/** Every point through the metrology library; a refused input leaves as a 422 naming `points.<i>...`. */
export function computeCalibration(inputs: CalibrationInputs, subject: ComputationSubject, computedAt: Date): ComputedResults {
  const air = resolveAir(inputs);
  const weightDensity = inputs.weightDensityKgPerM3 ?? subject.balanceWeightDensityKgPerM3;
  const published = publishedLimit(subject.vessel);
  const acceptance = acceptanceOf(subject.vessel, published);
  const points = inputs.points.map((point, i) => {
    const prefix = `points.${i}.`;
    const rename = renamed([
      [/^replicates\.(\d+)\.temperatureC$/, `${prefix}replicates.$1.waterTemperatureC`],
      [/^air\.airDensityKgPerM3$/, 'airDensityKgPerM3'],
      [/^(model\.netMassG|replicateVolumesMl|values|replicates)$/, `${prefix}replicates`],
      [/^(nominal|nominalVolumeMl)$/, `${prefix}nominalVolumeMl`],
      [/^(expansionCoefficientPerK|labOverride\..*|limitMl|randomLimitMl)$/, 'vesselId'],
    ]);
    const replicates = point.replicates.map((r, j) => checkedReplicate(r, subject.deliveryMode, `${prefix}replicates.${j}.`, air, inputs));
    const result = withFieldPaths(rename, () =>
      evaluateGravimetricPoint({
        nominalVolumeMl: point.nominalVolumeMl,
        replicates,
        air: { airDensityKgPerM3: air.densityKgPerM3 },
        weightDensityKgPerM3: weightDensity,
        expansionCoefficientPerK: subject.vessel.expansionCoefficientPerK,
        waterAirSaturated: inputs.waterAirSaturated ?? false,
        uncertainties: inputs.uncertainties,
        acceptance,
      }),
    );
    const equivalent: GravimetricVolumeRequest = {
      deliveryMode: subject.deliveryMode,
      nominalVolumeMl: point.nominalVolumeMl,
      replicates: point.replicates,
      weightDensityKgPerM3: weightDensity,
      expansionCoefficientPerK: subject.vessel.expansionCoefficientPerK,
      uncertainties: inputs.uncertainties,
    };
    return presentGravimetric(equivalent, air, result, published, renameWarnings(result.warnings, rename));
  });
  const warnings: ApiWarning[] = [...air.warnings];
  if (published?.verification === 'from-memory' && subject.vessel.limitSource === 'class-table') {
    warnings.push({
      code: 'published-limit-unverified',
      field: 'vesselId',
      message: `the ${published.source} limit used was transcribed from memory and not yet checked against the standard`,
    });
  }
  return {
    libraryVersion: METROLOGY_LIBRARY_VERSION,
    computedAt: computedAt.toISOString(),
    verdict: overallVerdict(points.map((p) => p.verdict.verdict)),
    airDensityKgPerM3: points[0]?.airDensityKgPerM3 ?? air.densityKgPerM3.toFixed(),
    airDensitySource: air.source,
    weightDensityKgPerM3: weightDensity,
    weightDensitySource: inputs.weightDensityKgPerM3 === undefined ? 'balance' : 'given',
    expansionCoefficientPerK: subject.vessel.expansionCoefficientPerK,
    acceptance: {
      rule: ACCEPTANCE_RULE,
      limitMl: subject.vessel.limitSource === 'none' ? null : subject.vessel.limitMl,
      randomLimitMl: published?.randomLimitMl?.toFixed() ?? null,
      limitSource: subject.vessel.limitSource,
      limitReason: subject.vessel.limitReason,
    },
    points,
    warnings,
  };
}

/** fail if any point fails; pass if every point passes; otherwise no limit was known. */
export function overallVerdict(verdicts: readonly Verdict[]): Verdict {
  if (verdicts.includes('fail')) return 'fail';
  if (verdicts.length > 0 && verdicts.every((v) => v === 'pass')) return 'pass';
  return 'no-limit';
}

function acceptanceOf(vessel: ComputationSubject['vessel'], published: ToleranceLimit | null) {
  const randomLimitMl = published?.randomLimitMl ?? null;
  if (vessel.limitSource === 'none' || vessel.limitMl === null) return { limitMl: null };
  if (vessel.limitSource === 'lab-override') {
    return { limitMl: null, randomLimitMl, labOverride: { limitMl: vessel.limitMl, reason: vessel.limitReason ?? 'laboratory limit' } };
  }
  return { limitMl: vessel.limitMl, randomLimitMl };
}

/** The published class limit at the vessel's nominal volume (for its random-error limit and the source it names). */
function publishedLimit(vessel: ComputationSubject['vessel']): ToleranceLimit | null {
  try {
    return lookupTolerance({
      kind: vessel.kind,
      accuracyClass: vessel.accuracyClass,
      nominalVolumeMl: vessel.nominalVolumeMl,
      standard: vessel.classStandard ?? 'ISO',
    });
  } catch (error) {
    // A standard the tables do not know (the lab named its own): no published limit.
    if (error instanceof MetrologyInputError) return null;
    throw error;
  }
}

/** Checks one replicate before the point is evaluated, so that a refusal names its own path. */
function checkedReplicate(
  r: CalibrationInputs['points'][number]['replicates'][number],
  mode: DeliveryMode,
  path: string,
  air: ResolvedAir,
  inputs: CalibrationInputs,
): GravimetricReplicateInput {
  const readings: ReplicateReadings =
    mode === 'contain'
      ? { mode, filledG: r.filledG ?? '', emptyG: r.emptyG ?? '' }
      : { mode, beforeG: r.beforeG ?? '', afterG: r.afterG ?? '' };
  const inReplicate = (field: string) => `${path}${field === 'temperatureC' ? 'waterTemperatureC' : field}`;
  const water = withFieldPaths(inReplicate, () => {
    netMassG(readings);
    return waterDensity({ temperatureC: r.waterTemperatureC, airSaturated: inputs.waterAirSaturated ?? false });
  });
  requireAirBelowWater(air, water.densityKgPerM3);
  return { readings, waterTemperatureC: r.waterTemperatureC };
}
