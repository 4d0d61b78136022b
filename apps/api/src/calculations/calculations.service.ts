import { Injectable } from '@nestjs/common';
import {
  CONVENTIONAL_AIR_DENSITY_KG_PER_M3,
  DEFAULT_CO2_MOLE_FRACTION,
  REFERENCE_WEIGHT_DENSITY_KG_PER_M3,
  STANDARD_ATMOSPHERE_PA,
  conventionalMassFromTrueMass,
  trueMassFromConventionalMass,
  trueMassFromReading,
  waterDensity,
  zFactor,
} from '@registry/metrology';

import { echoDecimal as echo, formatDecimal as str } from '../common/quantity';
import { computeAirDensity, requireAirBelowWater, resolveAir } from './air';
import type { AirConditions, BuoyancyRequest, ConventionalMassRequest, WaterDensityRequest, ZFactorRequest } from './calculations.schemas';
import type {
  AirDensityResponse,
  BuoyancyResponse,
  ConventionalMassResponse,
  WaterDensityResponse,
  ZFactorResponse,
} from './calculations.responses';
import { renamed, renameWarnings, withFieldPaths } from './field-paths';

/** Library field names that differ from the request's. */
const CONVENTIONAL_FIELDS = renamed([[/^massG$/, 'trueMassG']]);
const Z_FIELDS = renamed([[/^temperatureC$/, 'waterTemperatureC']]);

/** Densities, Z factor and buoyancy: thin adapters from request DTOs to the metrology library and back to strings. */
@Injectable()
export class CalculationsService {
  waterDensity(body: WaterDensityRequest): WaterDensityResponse {
    const r = waterDensity(body);
    return {
      densityKgPerM3: str(r.densityKgPerM3),
      method: r.method,
      temperatureC: echo(body.temperatureC),
      pressurePa: echo(body.pressurePa ?? STANDARD_ATMOSPHERE_PA),
      airSaturated: body.airSaturated ?? false,
      terms: {
        airFreeAtStandardPressureKgPerM3: str(r.terms.airFreeAtStandardPressureKgPerM3),
        airSaturationCorrectionKgPerM3: str(r.terms.airSaturationCorrectionKgPerM3),
        compressibilityFactor: str(r.terms.compressibilityFactor),
      },
      warnings: r.warnings.map((w) => ({ ...w })),
    };
  }

  airDensity(body: AirConditions): AirDensityResponse {
    const r = computeAirDensity(body);
    const i = r.intermediate;
    return {
      densityKgPerM3: str(r.densityKgPerM3),
      method: r.method,
      co2MoleFraction: r.method === 'cipm-2007' ? echo(body.co2MoleFraction ?? DEFAULT_CO2_MOLE_FRACTION) : null,
      intermediate: i && {
        saturationVapourPressurePa: str(i.saturationVapourPressurePa),
        enhancementFactor: str(i.enhancementFactor),
        vapourMoleFraction: str(i.vapourMoleFraction),
        compressibilityFactor: str(i.compressibilityFactor),
      },
      warnings: r.warnings.map((w) => ({ ...w })),
    };
  }

  zFactor(body: ZFactorRequest): ZFactorResponse {
    const air = resolveAir(body);
    const water = withFieldPaths(Z_FIELDS, () => waterDensity({ temperatureC: body.waterTemperatureC }));
    requireAirBelowWater(air, water.densityKgPerM3);
    const z = zFactor({
      waterTemperatureC: body.waterTemperatureC,
      airDensityKgPerM3: air.densityKgPerM3,
      waterDensityKgPerM3: water.densityKgPerM3,
      weightDensityKgPerM3: body.weightDensityKgPerM3,
    });
    return {
      zFactorMlPerG: str(z.zMlPerG),
      waterDensityKgPerM3: str(z.waterDensityKgPerM3),
      airDensityKgPerM3: air.source === 'given' ? echo(z.airDensityKgPerM3) : str(z.airDensityKgPerM3),
      airDensitySource: air.source,
      weightDensityKgPerM3: echo(z.weightDensityKgPerM3),
      warnings: [...renameWarnings(water.warnings, Z_FIELDS), ...air.warnings],
    };
  }

  buoyancy(body: BuoyancyRequest): BuoyancyResponse {
    const air = resolveAir(body);
    const r = trueMassFromReading({ ...body, airDensityKgPerM3: air.densityKgPerM3 });
    return {
      trueMassG: str(r.trueMassG),
      correctionG: str(r.correctionG),
      factor: str(r.factor),
      readingG: echo(body.readingG),
      objectDensityKgPerM3: echo(body.objectDensityKgPerM3),
      airDensityKgPerM3: air.source === 'given' ? echo(air.densityKgPerM3) : str(air.densityKgPerM3),
      airDensitySource: air.source,
      weightDensityKgPerM3: echo(body.weightDensityKgPerM3 ?? REFERENCE_WEIGHT_DENSITY_KG_PER_M3),
      warnings: air.warnings,
    };
  }

  conventionalMass(body: ConventionalMassRequest): ConventionalMassResponse {
    const { densityKgPerM3 } = body;
    const reference = {
      densityKgPerM3: echo(densityKgPerM3),
      referenceAirDensityKgPerM3: str(CONVENTIONAL_AIR_DENSITY_KG_PER_M3),
      referenceWeightDensityKgPerM3: str(REFERENCE_WEIGHT_DENSITY_KG_PER_M3),
      warnings: [],
    };
    if (body.trueMassG !== undefined) {
      const massG = body.trueMassG;
      const mc = withFieldPaths(CONVENTIONAL_FIELDS, () => conventionalMassFromTrueMass({ massG, densityKgPerM3 }));
      return { computed: 'conventionalMassG', trueMassG: echo(massG), conventionalMassG: str(mc), ...reference };
    }
    const conventionalMassG = body.conventionalMassG ?? '';
    const m = trueMassFromConventionalMass({ conventionalMassG, densityKgPerM3 });
    return { computed: 'trueMassG', trueMassG: str(m), conventionalMassG: echo(conventionalMassG), ...reference };
  }
}
