import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { decimalString as dec } from '../common/quantity';
import { AIR_DENSITY_METHODS } from './calculations.schemas';

/*
 * Response bodies. Every computed quantity is a decimal string (see
 * common/quantity.ts for the rounding rule); every response carries `warnings`.
 */

export const WarningSchema = z.object({
  code: z.string().meta({ description: 'Stable warning code, e.g. near-validity-limit' }),
  field: z.string().optional().meta({ description: 'Dotted path of the request field concerned' }),
  message: z.string(),
});
export const warnings = z.array(WarningSchema).meta({ description: 'Results that are computed but deserve a second look' });

export const AIR_DENSITY_SOURCES = ['given', ...AIR_DENSITY_METHODS] as const;
const airDensitySource = z.enum(AIR_DENSITY_SOURCES).meta({ description: 'Where the air density came from: the request, or a formula' });

export const WaterDensityResponseSchema = z.object({
  densityKgPerM3: dec('Density of water, kg/m3'),
  method: z.literal('tanaka-2001'),
  temperatureC: dec('Water temperature used, °C'),
  pressurePa: dec('Pressure used, Pa'),
  airSaturated: z.boolean(),
  terms: z.object({
    airFreeAtStandardPressureKgPerM3: dec('Air-free water at 101325 Pa, kg/m3'),
    airSaturationCorrectionKgPerM3: dec('Air-saturation correction added, kg/m3 (0 when not applied)'),
    compressibilityFactor: dec('Compressibility factor applied (1 at 101325 Pa)'),
  }),
  warnings,
});
export class WaterDensityResponseDto extends createZodDto(WaterDensityResponseSchema) {}

export const AirDensityResponseSchema = z.object({
  densityKgPerM3: dec('Density of moist air, kg/m3'),
  method: z.enum(AIR_DENSITY_METHODS),
  co2MoleFraction: dec('CO2 mole fraction used').nullable().meta({ description: 'CO2 mole fraction used (null for the OIML formula)' }),
  intermediate: z
    .object({
      saturationVapourPressurePa: dec('Saturation vapour pressure, Pa'),
      enhancementFactor: dec('Enhancement factor f'),
      vapourMoleFraction: dec('Mole fraction of water vapour'),
      compressibilityFactor: dec('Compressibility factor Z'),
    })
    .nullable()
    .meta({ description: 'CIPM-2007 intermediate values; null for the OIML simplified formula' }),
  warnings,
});
export class AirDensityResponseDto extends createZodDto(AirDensityResponseSchema) {}

export const ZFactorResponseSchema = z.object({
  zFactorMlPerG: dec('Z = (1/(rhoW - rhoA)) (1 - rhoA/rhoB), mL/g'),
  waterDensityKgPerM3: dec('Water density (Tanaka et al. 2001, air-free), kg/m3'),
  airDensityKgPerM3: dec('Air density used, kg/m3'),
  airDensitySource,
  weightDensityKgPerM3: dec('Weight density used, kg/m3'),
  warnings,
});
export class ZFactorResponseDto extends createZodDto(ZFactorResponseSchema) {}

export const BuoyancyResponseSchema = z.object({
  trueMassG: dec('True mass of the object, g'),
  correctionG: dec('trueMassG - readingG, g'),
  factor: dec('trueMassG / readingG: (1 - rhoA/rhoB) / (1 - rhoA/rho)'),
  readingG: dec('Balance indication, g'),
  objectDensityKgPerM3: dec('Object density, kg/m3'),
  airDensityKgPerM3: dec('Air density used, kg/m3'),
  airDensitySource,
  weightDensityKgPerM3: dec('Weight density used, kg/m3'),
  warnings,
});
export class BuoyancyResponseDto extends createZodDto(BuoyancyResponseSchema) {}

export const ConventionalMassResponseSchema = z.object({
  computed: z.enum(['conventionalMassG', 'trueMassG']).meta({ description: 'Which of the two masses was computed from the other' }),
  trueMassG: dec('True mass, g'),
  conventionalMassG: dec('Conventional mass (OIML D 28), g'),
  densityKgPerM3: dec('Density of the body, kg/m3'),
  referenceAirDensityKgPerM3: dec('Conventional air density, 1.2 kg/m3'),
  referenceWeightDensityKgPerM3: dec('Conventional weight density, 8000 kg/m3'),
  warnings,
});
export class ConventionalMassResponseDto extends createZodDto(ConventionalMassResponseSchema) {}

export type Warning = z.input<typeof WarningSchema>;
export type WaterDensityResponse = z.input<typeof WaterDensityResponseSchema>;
export type AirDensityResponse = z.input<typeof AirDensityResponseSchema>;
export type ZFactorResponse = z.input<typeof ZFactorResponseSchema>;
export type BuoyancyResponse = z.input<typeof BuoyancyResponseSchema>;
export type ConventionalMassResponse = z.input<typeof ConventionalMassResponseSchema>;
