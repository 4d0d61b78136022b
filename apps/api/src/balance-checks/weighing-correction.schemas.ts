import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { AIR_DENSITY_SOURCES, warnings } from '../calculations/calculations.responses';
import { airDensityOrConditions, exactlyOne } from '../calculations/calculations.schemas';
import { decimalString as dec, quantity } from '../common/quantity';
import { ITEM_STATUSES } from '../inventory/inventory.schemas';

export const WeighingCorrectionRequestSchema = z
  .strictObject({
    readingG: quantity('Indication of the named balance, g', '0.40842'),
    objectDensityKgPerM3: quantity('Density of the object weighed, kg/m3', '1636'),
    ...airDensityOrConditions,
  })
  .superRefine(exactlyOne('airDensityKgPerM3', 'airConditions'));
export class WeighingCorrectionRequestDto extends createZodDto(WeighingCorrectionRequestSchema) {}
export type WeighingCorrectionRequest = z.output<typeof WeighingCorrectionRequestSchema>;

export const WeighingCorrectionResponseSchema = z.object({
  balance: z.object({
    id: z.uuid(),
    assetTag: z.string(),
    status: z.enum(ITEM_STATUSES),
    externalCalibrationDue: z.string().nullable().meta({ description: 'Next external calibration (YYYY-MM-DD)' }),
    minimumWeightG: dec('Minimum weight from the balance’s latest passing USP <41> check, g').nullable(),
  }),
  readingG: dec('Balance indication, g'),
  objectDensityKgPerM3: dec('Object density, kg/m3'),
  airDensityKgPerM3: dec('Air density used, kg/m3'),
  airDensitySource: z.enum(AIR_DENSITY_SOURCES).meta({ description: 'Where the air density came from: the request, or a formula' }),
  adjustmentWeightDensityKgPerM3: dec('Density of the weights the balance is adjusted with (from the balance record), kg/m3'),
  trueMassG: dec('True mass: reading · (1 − rhoA/rhoB) / (1 − rhoA/rho), g'),
  conventionalMassG: dec('Conventional mass of the object (OIML D 28: 8000 kg/m3 weights in air of 1.2 kg/m3), g'),
  correctionG: dec('trueMassG − readingG, g'),
  factor: dec('trueMassG / readingG'),
  warnings,
});
export class WeighingCorrectionResponseDto extends createZodDto(WeighingCorrectionResponseSchema) {}
export type WeighingCorrectionResponse = z.input<typeof WeighingCorrectionResponseSchema>;
