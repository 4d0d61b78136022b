import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import {
  assetTagSchema,
  dateOnly,
  dueBeforeSchema,
  itemIds,
  itemStamps,
  listQuerySchema,
  locationSchema,
  makerSerialSchema,
  notesSchema,
  pageOf,
  reasonSchema,
  stored,
  statusSchema,
  storedQuantity,
  text,
} from '../inventory/inventory.schemas';

const capacityG = storedQuantity('Maximum capacity, g', '220', { precision: 14, scale: 6 });
const readabilityG = storedQuantity('Readability (scale interval) d, g; less than the capacity', '0.0001', { precision: 14, scale: 9 });
const adjustmentWeightDensityKgPerM3 = storedQuantity(
  'Density of the weights the balance is adjusted with, kg/m3 (2000 to 25000; 8000 by convention, OIML R 111-1)',
  '8000',
  { precision: 10, scale: 3 },
).refine((v) => Number(v) >= 2000 && Number(v) <= 25000, { error: 'must be between 2000 and 25000 kg/m3' });
const model = text(100, 'Maker and model', 'Analytical balance 220 g / 0.1 mg');
const externalCalibrationDate = dateOnly('Date of the current external (accredited) calibration; not in the future', '2026-01-14');
const externalCalibrationCertificate = text(100, 'Certificate number of that calibration', 'DKD-K-0815/2026-0113');
const externalCalibrationProvider = text(200, 'Who calibrated it', 'Regional calibration service');
const externalCalibrationDue = dateOnly('When the next external calibration is due (after the calibration date)', '2027-01-14');

export const CreateBalanceSchema = z
  .strictObject({
    labId: z.uuid().meta({ description: 'The lab that owns the balance (you must manage it, or be an administrator)' }),
    assetTag: assetTagSchema,
    makerSerial: makerSerialSchema.optional(),
    model: model.optional(),
    capacityG,
    readabilityG,
    adjustmentWeightDensityKgPerM3: adjustmentWeightDensityKgPerM3.optional().meta({ description: 'Defaults to 8000 kg/m3' }),
    location: locationSchema.optional(),
    status: statusSchema.optional().meta({ description: 'Defaults to in-service' }),
    externalCalibrationDate: externalCalibrationDate.optional(),
    externalCalibrationCertificate: externalCalibrationCertificate.optional(),
    externalCalibrationProvider: externalCalibrationProvider.optional(),
    externalCalibrationDue: externalCalibrationDue.optional(),
    notes: notesSchema.optional(),
  })
  .meta({
    example: {
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'BAL-02',
      model: 'Analytical balance 220 g / 0.1 mg',
      capacityG: '220',
      readabilityG: '0.0001',
      location: 'Weighing room 2.10',
      externalCalibrationDate: '2026-01-14',
      externalCalibrationCertificate: 'DKD-K-0815/2026-0113',
      externalCalibrationProvider: 'Regional calibration service',
      externalCalibrationDue: '2027-01-14',
    },
  });
export class CreateBalanceDto extends createZodDto(CreateBalanceSchema) {}
export type CreateBalance = z.output<typeof CreateBalanceSchema>;

export const UpdateBalanceSchema = z
  .strictObject({
    assetTag: assetTagSchema.optional(),
    makerSerial: makerSerialSchema.nullable().optional(),
    model: model.nullable().optional(),
    capacityG: capacityG.optional(),
    readabilityG: readabilityG.optional(),
    adjustmentWeightDensityKgPerM3: adjustmentWeightDensityKgPerM3.optional(),
    location: locationSchema.nullable().optional(),
    status: statusSchema.optional(),
    externalCalibrationDate: externalCalibrationDate.nullable().optional(),
    externalCalibrationCertificate: externalCalibrationCertificate.nullable().optional(),
    externalCalibrationProvider: externalCalibrationProvider.nullable().optional(),
    externalCalibrationDue: externalCalibrationDue.nullable().optional(),
    notes: notesSchema.nullable().optional(),
    reason: reasonSchema.optional(),
  })
  .refine((b) => Object.keys(b).some((k) => k !== 'reason'), { error: 'name at least one field to change' })
  .meta({
    description:
      'Only the members sent change; null clears an optional member. The minimum weight is set by balance checks, not here. ' +
      'Analysts of the lab may send location and notes only; a status change needs `reason`.',
    example: { status: 'quarantined', reason: 'Moved to room 2.12: level and adjust before use' },
  });
export class UpdateBalanceDto extends createZodDto(UpdateBalanceSchema) {}
export type UpdateBalance = z.output<typeof UpdateBalanceSchema>;

export const BALANCE_SORTS = ['assetTag', 'createdAt', 'externalCalibrationDue', 'capacityG'] as const;
export const BalanceListQuerySchema = listQuerySchema(BALANCE_SORTS).extend({
  dueBefore: dueBeforeSchema.meta({ description: 'Only balances whose next external calibration is due before this date' }),
});
export class BalanceListQueryDto extends createZodDto(BalanceListQuerySchema) {}
export type BalanceListQuery = z.output<typeof BalanceListQuerySchema>;

export const BalanceSchema = z
  .object({
    ...itemIds,
    assetTag: z.string(),
    makerSerial: z.string().nullable(),
    model: z.string().nullable(),
    capacityG: stored('Maximum capacity, g', '220'),
    readabilityG: stored('Readability d, g', '0.0001'),
    adjustmentWeightDensityKgPerM3: stored('Density of the adjustment weights, kg/m3', '8000'),
    location: z.string().nullable(),
    status: statusSchema,
    externalCalibrationDate: z.string().nullable().meta({ example: '2026-01-14' }),
    externalCalibrationCertificate: z.string().nullable(),
    externalCalibrationProvider: z.string().nullable(),
    externalCalibrationDue: z.string().nullable().meta({ example: '2027-01-14' }),
    minimumWeightG: stored('Minimum weight from the latest balance check (read-only here)', '0.082').nullable(),
    minimumWeightDeterminedAt: z.iso.datetime().nullable(),
    notes: z.string().nullable(),
    ...itemStamps,
  })
  .meta({
    example: {
      id: '5d1e4b7c-2a9f-4e3d-8c6b-0f1a2b3c4d5e',
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'BAL-02',
      makerSerial: 'B403118877',
      model: 'Analytical balance 220 g / 0.1 mg',
      capacityG: '220',
      readabilityG: '0.0001',
      adjustmentWeightDensityKgPerM3: '8000',
      location: 'Weighing room 2.10',
      status: 'in-service',
      externalCalibrationDate: '2026-01-14',
      externalCalibrationCertificate: 'DKD-K-0815/2026-0113',
      externalCalibrationProvider: 'Regional calibration service',
      externalCalibrationDue: '2027-01-14',
      minimumWeightG: null,
      minimumWeightDeterminedAt: null,
      notes: null,
      version: 1,
      createdAt: '2026-03-02T08:15:00.000Z',
      updatedAt: '2026-03-02T08:15:00.000Z',
    },
  });
export class BalanceDto extends createZodDto(BalanceSchema) {}
export type BalanceView = z.input<typeof BalanceSchema>;

export class BalancePageDto extends createZodDto(pageOf(BalanceSchema)) {}
