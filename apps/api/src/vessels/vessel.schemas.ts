import { ACCURACY_CLASSES, type AccuracyClass, VESSEL_KINDS, VESSEL_MATERIALS, type VesselKind } from '@registry/metrology';
import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import {
  assetTagSchema,
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
import { DELIVERY_MODES } from './vessel-rules';

const MATERIAL_IDS = VESSEL_MATERIALS.map((m) => m.id) as [string, ...string[]];

const kind = z.enum(VESSEL_KINDS as [VesselKind, ...VesselKind[]]).meta({ example: 'one-mark-pipette' });
const deliveryMode = z.enum(DELIVERY_MODES).meta({
  description:
    'contain ("In", TC) or deliver ("Ex", TD). Fixed by the kind for flasks (contain) and pipettes and burettes (deliver): leave it out or give that value. Required for graduated cylinders and other vessels.',
  example: 'deliver',
});
const nominalVolumeMl = storedQuantity('Nominal volume, mL', '25', { precision: 14, scale: 6 });
const graduationIntervalMl = storedQuantity(
  'Smallest graduation interval, mL; required for graduated pipettes, burettes and graduated cylinders',
  '0.1',
  { precision: 14, scale: 6 },
);
const accuracyClass = z
  .enum(ACCURACY_CLASSES as [AccuracyClass, ...AccuracyClass[]])
  .meta({ description: 'A, AS (class A with fast delivery), B, or none', example: 'AS' });
const classStandard = text(
  100,
  'The standard the class refers to: a family (ISO, the default; ASTM; USP), a table standard such as "ISO 648:2008", or another standard the lab names (then no published limit is looked up). Stored as the standard of the table used.',
  'ISO',
);
const material = z
  .enum(MATERIAL_IDS)
  .meta({ description: 'Material id from GET /v1/reference/materials; sets expansionCoefficientPerK', example: 'borosilicate-3-3' });
const expansionCoefficientPerK = storedQuantity(
  'Cubic thermal expansion coefficient, 1/K, when the maker states it (instead of a material)',
  '0.0000099',
  { precision: 14, scale: 12, zeroAllowed: true },
);
const limitOverrideMl = storedQuantity(
  "The lab's own acceptance limit, ± mL, replacing the published class limit (needs limitOverrideReason)",
  '0.05',
  { precision: 14, scale: 6 },
);
const limitOverrideReason = text(500, 'Why the lab departs from the published class limit', 'Teaching lab: student practice pipettes');

/** Members a vessel is created with (the CSV import uses the same, without labId). */
export const VesselFieldsSchema = z.strictObject({
  assetTag: assetTagSchema,
  kind,
  deliveryMode: deliveryMode.optional(),
  nominalVolumeMl,
  graduationIntervalMl: graduationIntervalMl.optional(),
  accuracyClass,
  classStandard: classStandard.optional(),
  material: material.optional(),
  expansionCoefficientPerK: expansionCoefficientPerK.optional(),
  makerSerial: makerSerialSchema.optional(),
  location: locationSchema.optional(),
  limitOverrideMl: limitOverrideMl.optional(),
  limitOverrideReason: limitOverrideReason.optional(),
  status: statusSchema.optional().meta({ description: 'Defaults to in-service' }),
  notes: notesSchema.optional(),
});
export type VesselFields = z.output<typeof VesselFieldsSchema>;

export const CreateVesselSchema = VesselFieldsSchema.extend({
  labId: z.uuid().meta({ description: 'The lab that owns the vessel (you must manage it, or be an administrator)' }),
}).meta({
  example: {
    labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
    assetTag: 'PIP-25-004',
    kind: 'one-mark-pipette',
    nominalVolumeMl: '25',
    accuracyClass: 'AS',
    material: 'borosilicate-3-3',
    makerSerial: '21.04-1187',
    location: 'Drinking-water lab, titration bench',
  },
});
export class CreateVesselDto extends createZodDto(CreateVesselSchema) {}
export type CreateVessel = z.output<typeof CreateVesselSchema>;

export const UpdateVesselSchema = z
  .strictObject({
    assetTag: assetTagSchema.optional(),
    kind: kind.optional(),
    deliveryMode: deliveryMode.optional(),
    nominalVolumeMl: nominalVolumeMl.optional(),
    graduationIntervalMl: graduationIntervalMl.nullable().optional(),
    accuracyClass: accuracyClass.optional(),
    classStandard: classStandard.nullable().optional(),
    material: material.optional(),
    expansionCoefficientPerK: expansionCoefficientPerK.optional(),
    makerSerial: makerSerialSchema.nullable().optional(),
    location: locationSchema.nullable().optional(),
    limitOverrideMl: limitOverrideMl
      .nullable()
      .optional()
      .meta({ description: 'Set a lab limit (± mL), or null to go back to the published class limit' }),
    limitOverrideReason: limitOverrideReason.optional(),
    status: statusSchema.optional(),
    notes: notesSchema.nullable().optional(),
    reason: reasonSchema.optional(),
  })
  .refine((b) => Object.keys(b).some((k) => k !== 'reason'), { error: 'name at least one field to change' })
  .meta({
    description:
      'Only the members sent change; null clears an optional member. Analysts of the lab may send location and notes only. ' +
      'A change of status or of the acceptance limit needs `reason`.',
    example: { status: 'quarantined', reason: 'Tip chipped during cleaning' },
  });
export class UpdateVesselDto extends createZodDto(UpdateVesselSchema) {}
export type UpdateVessel = z.output<typeof UpdateVesselSchema>;

export const VESSEL_SORTS = ['assetTag', 'createdAt', 'nominalVolumeMl', 'updatedAt'] as const;
export const VesselListQuerySchema = listQuerySchema(VESSEL_SORTS).extend({
  kind: kind.optional(),
  accuracyClass: accuracyClass.optional(),
});
export class VesselListQueryDto extends createZodDto(VesselListQuerySchema) {}
export type VesselListQuery = z.output<typeof VesselListQuerySchema>;

const LimitReferenceSchema = z
  .object({
    standard: z.string().meta({ example: 'ISO 648:2008' }),
    table: z.string().nullable().meta({ example: 'Table 1 (maximum permissible errors)' }),
    tableId: z.string().nullable().meta({ example: 'iso-648-2008' }),
    verification: z
      .enum(['checked', 'from-memory'])
      .nullable()
      .meta({ description: 'Whether the table value was checked against a published copy; from-memory values must be confirmed' }),
    note: z.string().nullable(),
  })
  .meta({ description: 'The published table a class-table limit comes from (null for other limit sources)' });

export const VesselSchema = z
  .object({
    ...itemIds,
    assetTag: z.string(),
    kind: z.string(),
    deliveryMode: z.enum(DELIVERY_MODES),
    nominalVolumeMl: stored('Nominal volume, mL', '25'),
    graduationIntervalMl: stored('Smallest graduation interval, mL', '0.1').nullable(),
    accuracyClass: z.string(),
    classStandard: z.string().nullable(),
    material: z.string().nullable(),
    expansionCoefficientPerK: stored('Cubic expansion coefficient, 1/K', '0.0000099'),
    makerSerial: z.string().nullable(),
    location: z.string().nullable(),
    limitMl: stored('Acceptance limit (maximum permissible error), ± mL', '0.03').nullable(),
    limitSource: z.enum(['class-table', 'lab-override', 'none']).meta({
      description:
        'class-table: the published class limit (see limitReference); lab-override: the lab’s own, with limitReason; none: no limit known',
    }),
    limitReason: z.string().nullable(),
    limitReference: LimitReferenceSchema.nullable(),
    status: statusSchema,
    notes: z.string().nullable(),
    ...itemStamps,
  })
  .meta({
    example: {
      id: '0b8e6d0a-5f38-4a8e-b0d5-7c2f4e1a9b33',
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'PIP-25-004',
      kind: 'one-mark-pipette',
      deliveryMode: 'deliver',
      nominalVolumeMl: '25',
      graduationIntervalMl: null,
      accuracyClass: 'AS',
      classStandard: 'ISO 648:2008',
      material: 'borosilicate-3-3',
      expansionCoefficientPerK: '0.0000099',
      makerSerial: '21.04-1187',
      location: 'Drinking-water lab, titration bench',
      limitMl: '0.03',
      limitSource: 'class-table',
      limitReason: null,
      limitReference: {
        standard: 'ISO 648:2008',
        table: 'Table 1 (maximum permissible errors)',
        tableId: 'iso-648-2008',
        verification: 'from-memory',
        note: 'From memory: check every row against ISO 648:2008 before relying on it.',
      },
      status: 'in-service',
      notes: null,
      version: 1,
      createdAt: '2026-03-02T08:15:00.000Z',
      updatedAt: '2026-03-02T08:15:00.000Z',
    },
  });
export class VesselDto extends createZodDto(VesselSchema) {}
export type VesselView = z.input<typeof VesselSchema>;

export class VesselPageDto extends createZodDto(pageOf(VesselSchema)) {}
