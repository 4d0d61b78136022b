import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { quantity } from '../common/quantity';

/*
 * Request bodies of the stateless calculation endpoints. Every object is strict
 * (an unknown field is a 400); quantities follow common/quantity.ts. Ranges of the
 * published methods are not repeated here: the library refuses them (422).
 */

export const AIR_DENSITY_METHODS = ['cipm-2007', 'oiml-r111'] as const;

/** Air conditions, shared by the air-density endpoint and every `airConditions` member. */
export const AirConditionsSchema = z.strictObject({
  temperatureC: quantity('Air temperature, °C (CIPM-2007 declares 15 to 27 °C)', '21.8'),
  pressurePa: quantity('Absolute air pressure at the balance (not reduced to sea level), Pa', '98650'),
  relativeHumidityPercent: quantity('Relative humidity, % (0 to 100)', '41'),
  co2MoleFraction: quantity('Mole fraction of CO2 (CIPM-2007 only); default 0.0004').optional(),
  method: z.enum(AIR_DENSITY_METHODS).optional().meta({ description: 'Formula: CIPM-2007 (default) or the OIML R 111-1 simplified one' }),
  outsideDeclaredRange: z.enum(['refuse', 'warn']).optional().meta({
    description: 'Outside the CIPM-2007 declared range (15-27 °C, 600-1100 hPa): refuse with 422 (default) or compute and warn',
  }),
});
export type AirConditions = z.output<typeof AirConditionsSchema>;

/** Fields that give the air density directly or through conditions (exactly one). */
export const airDensityOrConditions = {
  airDensityKgPerM3: quantity('Air density, kg/m3 (give this or airConditions)').optional(),
  airConditions: AirConditionsSchema.optional().meta({
    description: 'Air conditions to compute the air density from (or give airDensityKgPerM3)',
  }),
};

/** Adds a 400 unless exactly one of two optional members is present. */
export function exactlyOne<T extends Record<string, unknown>>(a: keyof T & string, b: keyof T & string) {
  return (value: T, ctx: z.RefinementCtx): void => {
    const hasA = value[a] !== undefined;
    const hasB = value[b] !== undefined;
    if (hasA !== hasB) return;
    ctx.addIssue({
      code: 'custom',
      path: [hasA ? b : a],
      message: hasA ? `give only one of ${a} and ${b}` : `is required: give exactly one of ${a} and ${b}`,
    });
  };
}

const weightDensity = quantity('Density of the weights the balance was adjusted with, kg/m3; default 8000 (OIML R 111-1)').optional();

export const WaterDensityRequestSchema = z.strictObject({
  temperatureC: quantity('Water temperature (ITS-90), °C; Tanaka et al. (2001) is valid from 0 to 40 °C', '21.4'),
  pressurePa: quantity('Absolute pressure on the water, Pa; default 101325 (no compressibility correction)').optional(),
  airSaturated: z.boolean().optional().meta({ description: 'Apply the air-saturation correction (stated for 0 to 25 °C); default false' }),
});
export class WaterDensityRequestDto extends createZodDto(WaterDensityRequestSchema) {}

export class AirDensityRequestDto extends createZodDto(AirConditionsSchema) {}

export const ZFactorRequestSchema = z
  .strictObject({
    waterTemperatureC: quantity('Water temperature, °C (0 to 40)', '21.4'),
    ...airDensityOrConditions,
    weightDensityKgPerM3: weightDensity,
  })
  .superRefine(exactlyOne('airDensityKgPerM3', 'airConditions'));
export class ZFactorRequestDto extends createZodDto(ZFactorRequestSchema) {}

export const BuoyancyRequestSchema = z
  .strictObject({
    readingG: quantity('Balance indication, g', '0.40842'),
    objectDensityKgPerM3: quantity('Density of the object weighed, kg/m3', '1636'),
    ...airDensityOrConditions,
    weightDensityKgPerM3: weightDensity,
  })
  .superRefine(exactlyOne('airDensityKgPerM3', 'airConditions'));
export class BuoyancyRequestDto extends createZodDto(BuoyancyRequestSchema) {}

export const ConventionalMassRequestSchema = z
  .strictObject({
    trueMassG: quantity('True mass, g: give this to get the conventional mass').optional(),
    conventionalMassG: quantity('Conventional mass (e.g. a weight certificate value), g: give this to get the true mass').optional(),
    densityKgPerM3: quantity('Density of the body, kg/m3', '7950'),
  })
  .superRefine(exactlyOne('trueMassG', 'conventionalMassG'));
export class ConventionalMassRequestDto extends createZodDto(ConventionalMassRequestSchema) {}

export type WaterDensityRequest = z.output<typeof WaterDensityRequestSchema>;
export type ZFactorRequest = z.output<typeof ZFactorRequestSchema>;
export type BuoyancyRequest = z.output<typeof BuoyancyRequestSchema>;
export type ConventionalMassRequest = z.output<typeof ConventionalMassRequestSchema>;
