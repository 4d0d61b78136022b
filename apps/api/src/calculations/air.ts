import { type AirDensityResult, type Decimal, MetrologyInputError, airDensity, dec } from '@registry/metrology';

import type { AirConditions } from './calculations.schemas';
import type { AIR_DENSITY_SOURCES } from './calculations.responses';
import { type ApiWarning, prefixed, renameWarnings, withFieldPaths } from './field-paths';

export interface ResolvedAir {
  readonly densityKgPerM3: Decimal;
  readonly source: (typeof AIR_DENSITY_SOURCES)[number];
  readonly warnings: ApiWarning[];
}

/** The air density of a request that gives either `airDensityKgPerM3` or `airConditions` (checked by its schema). */
export function resolveAir(body: { readonly airDensityKgPerM3?: string; readonly airConditions?: AirConditions }): ResolvedAir {
  if (body.airConditions !== undefined) {
    const prefix = 'airConditions.';
    const result = computeAirDensity(body.airConditions, prefix);
    return { densityKgPerM3: result.densityKgPerM3, source: result.method, warnings: renameWarnings(result.warnings, prefixed(prefix)) };
  }
  const rho = dec(body.airDensityKgPerM3 ?? '', 'airDensityKgPerM3');
  if (rho.isNegative()) throw new MetrologyInputError('airDensityKgPerM3', 'must not be negative', { min: '0', unit: 'kg/m3' });
  return { densityKgPerM3: rho, source: 'given', warnings: [] };
}

/**
 * The library's air density, with refusals named under `prefix`. Asked to compute outside the
 * declared range, its exponential terms can leave the numbers (no finite or absurdly large
 * vapour pressure): refused as a temperature too far out rather than returned.
 */
export function computeAirDensity(conditions: AirConditions, prefix = ''): AirDensityResult {
  const result = withFieldPaths(prefixed(prefix), () => airDensity(conditions));
  const psv = result.intermediate?.saturationVapourPressurePa;
  if (!result.densityKgPerM3.isFinite() || (psv && !(psv.isFinite() && psv.lessThan(1e12)))) {
    throw new MetrologyInputError(`${prefix}temperatureC`, 'is too far outside the declared range for the formula to give a result', {
      min: '15',
      max: '27',
      unit: '°C',
    });
  }
  return result;
}

/** The model divides by (rhoW - rhoA): refuse an air density that is not below the water density, naming the air field. */
export function requireAirBelowWater(air: ResolvedAir, waterDensityKgPerM3: Decimal): void {
  if (air.densityKgPerM3.lessThan(waterDensityKgPerM3)) return;
  const field = air.source === 'given' ? 'airDensityKgPerM3' : 'airConditions';
  throw new MetrologyInputError(
    field,
    `gives an air density that is not below the water density (${waterDensityKgPerM3.toFixed(4)} kg/m3)`,
    {
      max: waterDensityKgPerM3.toFixed(4),
      unit: 'kg/m3',
    },
  );
}
