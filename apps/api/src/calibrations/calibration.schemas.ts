import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { exactlyOne } from '../calculations/calculations.schemas';
import { GravimetricVolumeRequestSchema } from '../calculations/gravimetric.schemas';
import { pageQuerySchema } from '../common/pagination';
import { inStoredYears, storedYears } from '../common/calendar-range';
import { characterCount } from '../common/plain-text';
import { quantity } from '../common/quantity';
import { storedQuantity, text } from '../inventory/inventory.schemas';

/*
 * Request bodies of /v1/calibrations. Quantities follow common/quantity.ts; the
 * replicate and uncertainty shapes are those of POST /v1/calculations/gravimetric-volume.
 * Which readings a replicate carries (filledG/emptyG or beforeG/afterG) and how many
 * points a vessel needs depend on the vessel, so the service checks them.
 */

export const CALIBRATION_STATES = ['draft', 'submitted', 'approved', 'returned', 'voided'] as const;
export type CalibrationState = (typeof CALIBRATION_STATES)[number];

/** 2 to 30 replicates per point: every published procedure fits, and the work stays bounded. */
export const MIN_REPLICATES = 2;
export const MAX_REPLICATES = 30;
export const MAX_POINTS = 20;

const gravimetric = GravimetricVolumeRequestSchema.shape;

const replicates = z
  .array(gravimetric.replicates.element)
  .min(MIN_REPLICATES, { error: `needs at least ${MIN_REPLICATES} replicates` })
  .max(MAX_REPLICATES, { error: `accepts at most ${MAX_REPLICATES} replicates` })
  .meta({
    description: `${MIN_REPLICATES} to ${MAX_REPLICATES} replicates: filledG + emptyG for a vessel adjusted to contain, beforeG + afterG for one adjusted to deliver, and the water temperature`,
  });

export const PointSchema = z.strictObject({
  nominalVolumeMl: quantity(
    'The volume tested at, mL: the nominal volume for one-mark ware (may be left out), a volume up to the nominal for graduated ware',
    '25',
  ).optional(),
  replicates,
});
export type PointInput = z.output<typeof PointSchema>;

/** Air conditions at the balance; stored in columns of their own, so limited to their precision. */
export const CalibrationAirSchema = z.strictObject({
  temperatureC: storedQuantity('Air temperature, °C (CIPM-2007: 15 to 27 °C)', '21.8', { precision: 6, scale: 3, zeroAllowed: true }),
  pressurePa: storedQuantity('Absolute air pressure at the balance, Pa', '98650', { precision: 10, scale: 2 }),
  relativeHumidityPercent: storedQuantity('Relative humidity, %', '41', { precision: 6, scale: 3, zeroAllowed: true }),
  co2MoleFraction: quantity('Mole fraction of CO2; default 0.0004').optional(),
});
export type CalibrationAir = z.output<typeof CalibrationAirSchema>;

const airDensityKgPerM3 = storedQuantity('A measured air density, kg/m3 (instead of airConditions)', '1.1669', {
  precision: 10,
  scale: 7,
});
const weightDensityKgPerM3 = quantity(
  'Density of the weights the balance was adjusted with, kg/m3; default: the balance record’s adjustment-weight density',
  '8000',
);
const waterAirSaturated = z.boolean().meta({ description: 'Water left standing in air: apply the air-saturation correction' });
const performedAt = z.iso
  .datetime({ offset: true, error: 'must be an ISO 8601 date-time with a zone, e.g. 2026-03-02T09:30:00Z' })
  .refine(inStoredYears, storedYears)
  .meta({ description: 'When the weighings were made (not in the future)', example: '2026-03-02T09:30:00Z' });
const points = z
  .array(PointSchema)
  .min(1, { error: 'needs at least one point' })
  .max(MAX_POINTS, { error: `accepts at most ${MAX_POINTS} points` })
  .meta({
    description:
      'One point at the nominal volume for one-mark ware; two or more distinct volumes up to the nominal (e.g. 10 %, 50 %, 100 %) for burettes, graduated pipettes, graduated cylinders and variable piston pipettes',
  });
const notes = text(2000, 'Free notes on the run', 'Second run after cleaning the tip.');

export const CreateCalibrationSchema = z
  .strictObject({
    vesselId: z.uuid({ error: 'must be a UUID' }),
    performerId: z
      .uuid({ error: 'must be a UUID' })
      .optional()
      .meta({ description: 'Who performed it; default you. A lab manager may enter a calibration for an analyst or manager of the lab.' }),
    balanceId: z.uuid({ error: 'must be a UUID' }),
    thermometerId: z.uuid({ error: 'must be a UUID' }).meta({ description: 'A thermometer or thermohygrometer of the lab' }),
    performedAt,
    airConditions: CalibrationAirSchema.optional(),
    airDensityKgPerM3: airDensityKgPerM3.optional(),
    weightDensityKgPerM3: weightDensityKgPerM3.optional(),
    waterAirSaturated: waterAirSaturated.optional(),
    uncertainties: gravimetric.uncertainties,
    points,
    notes: notes.optional(),
  })
  .superRefine(exactlyOne('airDensityKgPerM3', 'airConditions'));
export class CreateCalibrationDto extends createZodDto(CreateCalibrationSchema) {}
export type CreateCalibration = z.output<typeof CreateCalibrationSchema>;

export const UpdateCalibrationSchema = z
  .strictObject({
    balanceId: z.uuid({ error: 'must be a UUID' }).optional(),
    thermometerId: z.uuid({ error: 'must be a UUID' }).optional(),
    performedAt: performedAt.optional(),
    airConditions: CalibrationAirSchema.optional().meta({ description: 'Replaces the air conditions (and a measured air density)' }),
    airDensityKgPerM3: airDensityKgPerM3.optional().meta({ description: 'Replaces the air conditions with a measured air density' }),
    weightDensityKgPerM3: weightDensityKgPerM3.nullable().optional().meta({ description: 'null: back to the balance’s value' }),
    waterAirSaturated: waterAirSaturated.optional(),
    uncertainties: gravimetric.uncertainties.optional(),
    points: points.optional().meta({ description: 'Replaces every point' }),
    notes: notes.nullable().optional(),
  })
  .superRefine((value, ctx) => {
    if (value.airConditions !== undefined && value.airDensityKgPerM3 !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['airDensityKgPerM3'], message: 'give only one of airDensityKgPerM3 and airConditions' });
    }
    if (Object.values(value).every((v) => v === undefined))
      ctx.addIssue({ code: 'custom', path: [], message: 'change at least one member' });
  });
export class UpdateCalibrationDto extends createZodDto(UpdateCalibrationSchema) {}
export type UpdateCalibration = z.output<typeof UpdateCalibrationSchema>;

/** A body that may be left out altogether (no body is read as {}). */
const optionalBody = <T extends z.ZodType>(schema: T) => z.preprocess((v) => v ?? {}, schema);

export const SubmitCalibrationSchema = optionalBody(
  z.strictObject({
    exceptionReason: text(
      1000,
      'Only where the lab allows exceptions: why the calibration is accepted although a traceability rule is broken (recorded with it and in the audit trail)',
      'Balance certificate renewed on site; the provider’s paperwork follows.',
    ).optional(),
  }),
);
export class SubmitCalibrationDto extends createZodDto(SubmitCalibrationSchema) {}
export type SubmitCalibration = z.output<typeof SubmitCalibrationSchema>;

export const ApproveCalibrationSchema = optionalBody(
  z.strictObject({
    note: text(2000, 'Reviewer’s note, kept with the record', 'Raw data checked against the balance printout.').optional(),
  }),
);
export class ApproveCalibrationDto extends createZodDto(ApproveCalibrationSchema) {}

export const ReturnCalibrationSchema = z.strictObject({
  note: text(2000, 'What the performer must correct (required)', 'Replicate 3 looks mistyped; check the printout.'),
});
export class ReturnCalibrationDto extends createZodDto(ReturnCalibrationSchema) {}

export const VoidCalibrationSchema = z.strictObject({
  reason: text(1000, 'Why the record is voided (at least 3 characters)', 'Entered against the wrong vessel.').refine(
    (s) => characterCount(s) >= 3,
    {
      error: 'must be at least 3 characters',
    },
  ),
});
export class VoidCalibrationDto extends createZodDto(VoidCalibrationSchema) {}

export const CalibrationIdParamSchema = z.strictObject({ id: z.uuid({ error: 'must be a UUID' }) });
export class CalibrationIdParamDto extends createZodDto(CalibrationIdParamSchema) {}

const instant = (description: string) =>
  z.iso.datetime({ offset: true, error: 'must be an ISO 8601 date-time' }).refine(inStoredYears, storedYears).meta({ description });

export const CalibrationListQuerySchema = pageQuerySchema.strict().extend({
  labId: z.uuid().optional().meta({ description: 'Only this lab’s calibrations (a lab you cannot read gives an empty list)' }),
  vesselId: z.uuid().optional(),
  performerId: z.uuid().optional(),
  state: z.enum(CALIBRATION_STATES).optional(),
  performedFrom: instant('Performed at or after this instant').optional(),
  performedTo: instant('Performed before this instant').optional(),
});
export class CalibrationListQueryDto extends createZodDto(CalibrationListQuerySchema) {}
export type CalibrationListQuery = z.output<typeof CalibrationListQuerySchema>;
