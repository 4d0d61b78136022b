import { Injectable } from '@nestjs/common';
import {
  type GravimetricReplicateInput,
  type ReplicateReadings,
  type ToleranceLimit,
  evaluateGravimetricPoint,
  lookupTolerance,
  dec,
  netMassG,
  requireInRange,
  waterDensity,
} from '@registry/metrology';

import { type ResolvedAir, requireAirBelowWater, resolveAir } from './air';
import { type ApiWarning, renamed, renameWarnings, withFieldPaths } from './field-paths';
import { presentGravimetric } from './gravimetric.presenter';
import type { GravimetricVolumeResponse } from './gravimetric.responses';
import type { GravimetricVolumeRequest } from './gravimetric.schemas';

/** Library names -> request paths for everything evaluateGravimetricPoint may name. */
const POINT_FIELDS = renamed([
  [/^replicates\.(\d+)\.temperatureC$/, 'replicates.$1.waterTemperatureC'],
  [/^air\.airDensityKgPerM3$/, 'airDensityKgPerM3'],
  [/^alpha$/, 'grubbsAlpha'],
  [/^labOverride\.reason$/, 'limitReason'],
  [/^labOverride\.(limitMl|randomLimitMl)$/, '$1'],
  [/^standard$/, 'toleranceStandard'],
  [/^nominal$/, 'nominalVolumeMl'],
  [/^(model\.netMassG|replicateVolumesMl|values)$/, 'replicates'],
]);

/** One calibration point by weighing (ISO 4787; ISO 8655-6): the library does the metrology, this maps fields. */
@Injectable()
export class GravimetricService {
  evaluate(body: GravimetricVolumeRequest): GravimetricVolumeResponse {
    if (body.referenceTemperatureC !== undefined) {
      // Our bound: the model is evaluated with water between 0 and 40 °C, so is its reference temperature.
      requireInRange('referenceTemperatureC', dec(body.referenceTemperatureC), 0, 40, '°C');
    }
    const air = resolveAir(body);
    const replicates = body.replicates.map((r, i) => checkedReplicate(r, body.deliveryMode, i, air, body.waterAirSaturated ?? false));
    const warnings: ApiWarning[] = [...air.warnings];
    const published = publishedLimit(body, warnings);
    const override =
      body.limitMl === undefined
        ? {}
        : {
            labOverride: {
              limitMl: body.limitMl,
              reason: body.limitReason ?? '',
              ...(body.randomLimitMl === undefined ? {} : { randomLimitMl: body.randomLimitMl }),
            },
          };
    const result = withFieldPaths(POINT_FIELDS, () =>
      evaluateGravimetricPoint({
        nominalVolumeMl: body.nominalVolumeMl,
        replicates,
        air: { airDensityKgPerM3: air.densityKgPerM3 },
        weightDensityKgPerM3: body.weightDensityKgPerM3,
        material: body.material,
        expansionCoefficientPerK: body.expansionCoefficientPerK,
        referenceTemperatureC: body.referenceTemperatureC,
        waterAirSaturated: body.waterAirSaturated ?? false,
        uncertainties: body.uncertainties,
        grubbsAlpha: body.grubbsAlpha,
        acceptance: { limitMl: published?.limitMl ?? null, randomLimitMl: published?.randomLimitMl ?? null, ...override },
      }),
    );
    warnings.push(...renameWarnings(result.warnings, POINT_FIELDS));
    if (published?.verification === 'from-memory' && body.limitMl === undefined) {
      warnings.push({
        code: 'published-limit-unverified',
        field: 'vesselKind',
        message: `the ${published.source} limit used was transcribed from memory and not yet checked against the standard`,
      });
    }
    return presentGravimetric(body, air, result, published, warnings);
  }
}

/**
 * Checks one replicate's readings and water temperature before the run is evaluated,
 * so that a refusal names `replicates.<i>.<field>` (the library does not know the index).
 */
function checkedReplicate(
  r: GravimetricVolumeRequest['replicates'][number],
  mode: GravimetricVolumeRequest['deliveryMode'],
  index: number,
  air: ResolvedAir,
  airSaturated: boolean,
): GravimetricReplicateInput {
  // The schema guarantees the two readings of the delivery mode are present.
  const readings: ReplicateReadings =
    mode === 'contain'
      ? { mode, filledG: r.filledG ?? '', emptyG: r.emptyG ?? '' }
      : { mode, beforeG: r.beforeG ?? '', afterG: r.afterG ?? '' };
  const inReplicate = (field: string) => `replicates.${index}.${field === 'temperatureC' ? 'waterTemperatureC' : field}`;
  const water = withFieldPaths(inReplicate, () => {
    netMassG(readings);
    return waterDensity({ temperatureC: r.waterTemperatureC, airSaturated });
  });
  requireAirBelowWater(air, water.densityKgPerM3);
  return { readings, waterTemperatureC: r.waterTemperatureC };
}

/** The published class limit when vesselKind and accuracyClass are given (never interpolated). */
function publishedLimit(body: GravimetricVolumeRequest, warnings: ApiWarning[]): ToleranceLimit | null {
  const { vesselKind: kind, accuracyClass } = body;
  if (kind === undefined || accuracyClass === undefined) return null;
  const found = withFieldPaths(POINT_FIELDS, () =>
    lookupTolerance({ kind, accuracyClass, nominalVolumeMl: body.nominalVolumeMl, standard: body.toleranceStandard }),
  );
  if (found === null) {
    warnings.push({
      code: 'no-published-limit',
      field: 'vesselKind',
      message: `no published limit for a ${kind} of class ${accuracyClass} at ${body.nominalVolumeMl} mL (nothing is interpolated)`,
    });
  }
  return found;
}
