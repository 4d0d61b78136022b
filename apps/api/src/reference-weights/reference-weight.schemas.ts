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

/** OIML R 111-1 accuracy classes of weights (same list as the reference_weights CHECK). */
export const OIML_CLASSES = ['E1', 'E2', 'F1', 'F2', 'M1', 'M1-2', 'M2', 'M2-3', 'M3'] as const;

const nominalMassG = storedQuantity('Nominal mass, g', '100', { precision: 14, scale: 6 });
const oimlClass = z.enum(OIML_CLASSES).meta({ description: 'OIML R 111-1 class', example: 'F1' });
const conventionalMassG = storedQuantity('Conventional mass from the certificate (OIML D 28), g', '100.00012', {
  precision: 16,
  scale: 9,
});
const expandedUncertaintyG = storedQuantity('Expanded uncertainty (k = 2) of the conventional mass from the certificate, g', '0.00005', {
  precision: 16,
  scale: 9,
});
const densityKgPerM3 = storedQuantity('Density of the weight, kg/m3 (2000 to 25000)', '7950', { precision: 10, scale: 3 }).refine(
  (v) => Number(v) >= 2000 && Number(v) <= 25000,
  { error: 'must be between 2000 and 25000 kg/m3' },
);
const certificateNumber = text(100, 'Calibration certificate number', 'MW-2026-0331');
const certificateDue = dateOnly('When the weight is due for recalibration', '2028-03-31');

export const CreateReferenceWeightSchema = z
  .strictObject({
    labId: z.uuid().meta({ description: 'The lab that owns the weight (you must manage it, or be an administrator)' }),
    assetTag: assetTagSchema,
    nominalMassG,
    oimlClass,
    conventionalMassG: conventionalMassG.optional(),
    expandedUncertaintyG: expandedUncertaintyG.optional(),
    densityKgPerM3: densityKgPerM3.optional(),
    certificateNumber: certificateNumber.optional(),
    certificateDue: certificateDue.optional(),
    makerSerial: makerSerialSchema.optional(),
    location: locationSchema.optional(),
    status: statusSchema.optional().meta({ description: 'Defaults to in-service' }),
    notes: notesSchema.optional(),
  })
  .meta({
    example: {
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'CW-F1-100G-1',
      nominalMassG: '100',
      oimlClass: 'F1',
      conventionalMassG: '100.00012',
      expandedUncertaintyG: '0.00005',
      densityKgPerM3: '7950',
      certificateNumber: 'MW-2026-0331',
      certificateDue: '2028-03-31',
      location: 'Weighing room 2.10, check-weight case',
    },
  });
export class CreateReferenceWeightDto extends createZodDto(CreateReferenceWeightSchema) {}
export type CreateReferenceWeight = z.output<typeof CreateReferenceWeightSchema>;

export const UpdateReferenceWeightSchema = z
  .strictObject({
    assetTag: assetTagSchema.optional(),
    nominalMassG: nominalMassG.optional(),
    oimlClass: oimlClass.optional(),
    conventionalMassG: conventionalMassG.nullable().optional(),
    expandedUncertaintyG: expandedUncertaintyG.nullable().optional(),
    densityKgPerM3: densityKgPerM3.nullable().optional(),
    certificateNumber: certificateNumber.nullable().optional(),
    certificateDue: certificateDue.nullable().optional(),
    makerSerial: makerSerialSchema.nullable().optional(),
    location: locationSchema.nullable().optional(),
    status: statusSchema.optional(),
    notes: notesSchema.nullable().optional(),
    reason: reasonSchema.optional(),
  })
  .refine((b) => Object.keys(b).some((k) => k !== 'reason'), { error: 'name at least one field to change' })
  .meta({
    description:
      'Only the members sent change; null clears an optional member. Analysts of the lab may send location and notes only; ' +
      'a status change needs `reason`.',
    example: {
      conventionalMassG: '100.00009',
      expandedUncertaintyG: '0.00005',
      certificateNumber: 'MW-2028-0114',
      certificateDue: '2030-01-31',
    },
  });
export class UpdateReferenceWeightDto extends createZodDto(UpdateReferenceWeightSchema) {}
export type UpdateReferenceWeight = z.output<typeof UpdateReferenceWeightSchema>;

export const REFERENCE_WEIGHT_SORTS = ['assetTag', 'createdAt', 'certificateDue', 'nominalMassG'] as const;
export const ReferenceWeightListQuerySchema = listQuerySchema(REFERENCE_WEIGHT_SORTS).extend({
  oimlClass: oimlClass.optional(),
  dueBefore: dueBeforeSchema.meta({ description: 'Only weights whose certificate is due before this date' }),
});
export class ReferenceWeightListQueryDto extends createZodDto(ReferenceWeightListQuerySchema) {}
export type ReferenceWeightListQuery = z.output<typeof ReferenceWeightListQuerySchema>;

export const ReferenceWeightSchema = z
  .object({
    ...itemIds,
    assetTag: z.string(),
    nominalMassG: stored('Nominal mass, g', '100'),
    oimlClass: z.enum(OIML_CLASSES),
    conventionalMassG: stored('Conventional mass, g', '100.00012').nullable(),
    expandedUncertaintyG: stored('Expanded uncertainty (k = 2), g', '0.00005').nullable(),
    densityKgPerM3: stored('Density, kg/m3', '7950').nullable(),
    certificateNumber: z.string().nullable(),
    certificateDue: z.string().nullable().meta({ example: '2028-03-31' }),
    makerSerial: z.string().nullable(),
    location: z.string().nullable(),
    status: statusSchema,
    notes: z.string().nullable(),
    ...itemStamps,
  })
  .meta({
    example: {
      id: '7a2c9e41-3b5d-4f60-8e1a-2c3d4e5f6a7b',
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'CW-F1-100G-1',
      nominalMassG: '100',
      oimlClass: 'F1',
      conventionalMassG: '100.00012',
      expandedUncertaintyG: '0.00005',
      densityKgPerM3: '7950',
      certificateNumber: 'MW-2026-0331',
      certificateDue: '2028-03-31',
      makerSerial: null,
      location: 'Weighing room 2.10, check-weight case',
      status: 'in-service',
      notes: null,
      version: 1,
      createdAt: '2026-03-02T08:15:00.000Z',
      updatedAt: '2026-03-02T08:15:00.000Z',
    },
  });
export class ReferenceWeightDto extends createZodDto(ReferenceWeightSchema) {}
export type ReferenceWeightView = z.input<typeof ReferenceWeightSchema>;

export class ReferenceWeightPageDto extends createZodDto(pageOf(ReferenceWeightSchema)) {}
