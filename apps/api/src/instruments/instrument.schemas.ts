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

export const INSTRUMENT_KINDS = ['thermometer', 'barometer', 'hygrometer', 'thermohygrometer'] as const;
export type InstrumentKind = (typeof INSTRUMENT_KINDS)[number];

/** Which uncertainty members each kind of instrument may carry (the quantities it measures). */
export const UNCERTAINTIES_OF: Readonly<Record<InstrumentKind, readonly string[]>> = {
  thermometer: ['temperatureUncertaintyK'],
  barometer: ['pressureUncertaintyPa'],
  hygrometer: ['humidityUncertaintyPercent'],
  thermohygrometer: ['temperatureUncertaintyK', 'humidityUncertaintyPercent'],
};
export const UNCERTAINTY_FIELDS = ['temperatureUncertaintyK', 'pressureUncertaintyPa', 'humidityUncertaintyPercent'] as const;

const kind = z.enum(INSTRUMENT_KINDS).meta({ example: 'thermometer' });
const model = text(100, 'Maker and model', 'Digital thermometer, Pt100 probe');
const temperatureUncertaintyK = storedQuantity('Expanded uncertainty (k = 2) of temperature, K (thermometers, thermohygrometers)', '0.05', {
  precision: 10,
  scale: 4,
});
const pressureUncertaintyPa = storedQuantity('Expanded uncertainty (k = 2) of pressure, Pa (barometers)', '50', {
  precision: 10,
  scale: 2,
});
const humidityUncertaintyPercent = storedQuantity(
  'Expanded uncertainty (k = 2) of relative humidity, percentage points (hygrometers, thermohygrometers)',
  '2',
  { precision: 7, scale: 3 },
);
const calibrationDate = dateOnly('Date of the current calibration; not in the future', '2026-02-03');
const certificateNumber = text(100, 'Calibration certificate number', 'TH-2026-0207');
const calibrationDue = dateOnly('When the next calibration is due (after the calibration date)', '2027-02-03');

export const CreateInstrumentSchema = z
  .strictObject({
    labId: z.uuid().meta({ description: 'The lab that owns the instrument (you must manage it, or be an administrator)' }),
    assetTag: assetTagSchema,
    kind,
    makerSerial: makerSerialSchema.optional(),
    model: model.optional(),
    temperatureUncertaintyK: temperatureUncertaintyK.optional(),
    pressureUncertaintyPa: pressureUncertaintyPa.optional(),
    humidityUncertaintyPercent: humidityUncertaintyPercent.optional(),
    calibrationDate: calibrationDate.optional(),
    certificateNumber: certificateNumber.optional(),
    calibrationDue: calibrationDue.optional(),
    location: locationSchema.optional(),
    status: statusSchema.optional().meta({ description: 'Defaults to in-service' }),
    notes: notesSchema.optional(),
  })
  .meta({
    example: {
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'TH-07',
      kind: 'thermometer',
      model: 'Digital thermometer, Pt100 probe',
      temperatureUncertaintyK: '0.05',
      calibrationDate: '2026-02-03',
      certificateNumber: 'TH-2026-0207',
      calibrationDue: '2027-02-03',
      location: 'Weighing room 2.10, water bath',
    },
  });
export class CreateInstrumentDto extends createZodDto(CreateInstrumentSchema) {}
export type CreateInstrument = z.output<typeof CreateInstrumentSchema>;

export const UpdateInstrumentSchema = z
  .strictObject({
    assetTag: assetTagSchema.optional(),
    kind: kind.optional(),
    makerSerial: makerSerialSchema.nullable().optional(),
    model: model.nullable().optional(),
    temperatureUncertaintyK: temperatureUncertaintyK.nullable().optional(),
    pressureUncertaintyPa: pressureUncertaintyPa.nullable().optional(),
    humidityUncertaintyPercent: humidityUncertaintyPercent.nullable().optional(),
    calibrationDate: calibrationDate.nullable().optional(),
    certificateNumber: certificateNumber.nullable().optional(),
    calibrationDue: calibrationDue.nullable().optional(),
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
    example: { calibrationDate: '2027-01-28', certificateNumber: 'TH-2027-0131', calibrationDue: '2028-01-28' },
  });
export class UpdateInstrumentDto extends createZodDto(UpdateInstrumentSchema) {}
export type UpdateInstrument = z.output<typeof UpdateInstrumentSchema>;

export const INSTRUMENT_SORTS = ['assetTag', 'createdAt', 'calibrationDue', 'kind'] as const;
export const InstrumentListQuerySchema = listQuerySchema(INSTRUMENT_SORTS).extend({
  kind: kind.optional(),
  dueBefore: dueBeforeSchema.meta({ description: 'Only instruments whose calibration is due before this date' }),
});
export class InstrumentListQueryDto extends createZodDto(InstrumentListQuerySchema) {}
export type InstrumentListQuery = z.output<typeof InstrumentListQuerySchema>;

export const InstrumentSchema = z
  .object({
    ...itemIds,
    assetTag: z.string(),
    kind: z.enum(INSTRUMENT_KINDS),
    makerSerial: z.string().nullable(),
    model: z.string().nullable(),
    temperatureUncertaintyK: stored('Expanded uncertainty (k = 2) of temperature, K', '0.05').nullable(),
    pressureUncertaintyPa: stored('Expanded uncertainty (k = 2) of pressure, Pa', '50').nullable(),
    humidityUncertaintyPercent: stored('Expanded uncertainty (k = 2) of relative humidity, percentage points', '2').nullable(),
    calibrationDate: z.string().nullable().meta({ example: '2026-02-03' }),
    certificateNumber: z.string().nullable(),
    calibrationDue: z.string().nullable().meta({ example: '2027-02-03' }),
    location: z.string().nullable(),
    status: statusSchema,
    notes: z.string().nullable(),
    ...itemStamps,
  })
  .meta({
    example: {
      id: '9e8d7c6b-5a4f-4e3d-8c2b-1a0f9e8d7c6b',
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      assetTag: 'TH-07',
      kind: 'thermometer',
      makerSerial: null,
      model: 'Digital thermometer, Pt100 probe',
      temperatureUncertaintyK: '0.05',
      pressureUncertaintyPa: null,
      humidityUncertaintyPercent: null,
      calibrationDate: '2026-02-03',
      certificateNumber: 'TH-2026-0207',
      calibrationDue: '2027-02-03',
      location: 'Weighing room 2.10, water bath',
      status: 'in-service',
      notes: null,
      version: 1,
      createdAt: '2026-03-02T08:15:00.000Z',
      updatedAt: '2026-03-02T08:15:00.000Z',
    },
  });
export class InstrumentDto extends createZodDto(InstrumentSchema) {}
export type InstrumentView = z.input<typeof InstrumentSchema>;

export class InstrumentPageDto extends createZodDto(pageOf(InstrumentSchema)) {}
