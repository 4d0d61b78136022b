import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { AIR_DENSITY_SOURCES, warnings } from '../calculations/calculations.responses';
import { GravimetricVolumeResponseSchema } from '../calculations/gravimetric.responses';
import { decimalString as dec } from '../common/quantity';
import { ImpactSchema } from '../impact/impact.schemas';
import { pageOf } from '../inventory/inventory.schemas';
import { CALIBRATION_STATES } from './calibration.schemas';

/*
 * What /v1/calibrations answers with. The inputs are echoed as stored; the
 * results are the frozen computation of the submission, one entry per point in
 * the shape of POST /v1/calculations/gravimetric-volume.
 */

const ReplicateInputSchema = z.object({
  filledG: dec('contain: reading filled, g').optional(),
  emptyG: dec('contain: reading empty, g').optional(),
  beforeG: dec('deliver: weighing vessel before, g').optional(),
  afterG: dec('deliver: weighing vessel after, g').optional(),
  waterTemperatureC: dec('Water temperature, °C'),
});

const UncertaintiesInputSchema = z.object({
  balanceCalibrationG: dec('g'),
  balanceResolutionG: dec('g'),
  waterTemperatureC: dec('°C'),
  waterDensityKgPerM3: dec('kg/m3').optional(),
  airDensityKgPerM3: dec('kg/m3'),
  weightDensityKgPerM3: dec('kg/m3').optional(),
  expansionCoefficientPerK: dec('1/K').optional(),
  meniscusMl: dec('mL'),
  evaporationMl: dec('mL'),
});

/** The stored inputs: what the performer entered, with each point's volume resolved. */
export const CalibrationInputsSchema = z.object({
  points: z.array(z.object({ nominalVolumeMl: dec('Volume tested at, mL'), replicates: z.array(ReplicateInputSchema) })),
  airConditions: z
    .object({
      temperatureC: dec('°C'),
      pressurePa: dec('Pa'),
      relativeHumidityPercent: dec('%'),
      co2MoleFraction: dec('mole fraction').optional(),
    })
    .optional(),
  airDensityKgPerM3: dec('Measured air density, kg/m3').optional(),
  weightDensityKgPerM3: dec('Weight density given by the performer, kg/m3').optional(),
  waterAirSaturated: z.boolean().optional(),
  uncertainties: UncertaintiesInputSchema,
});
export type CalibrationInputs = z.infer<typeof CalibrationInputsSchema>;

export const TRACEABILITY_RULES = [
  'vessel-in-service',
  'balance-in-service',
  'balance-calibration-current',
  'balance-check-passed',
  'thermometer-in-service',
  'thermometer-calibration-current',
] as const;
export type TraceabilityRule = (typeof TRACEABILITY_RULES)[number];

export const ViolationSchema = z.object({
  rule: z.enum(TRACEABILITY_RULES),
  itemId: z.uuid().meta({ description: 'The vessel, balance or thermometer concerned' }),
  detail: z.string(),
  exceptionAllowed: z
    .boolean()
    .meta({ description: 'Whether a lab that allows exceptions may accept it with a reason (never for the vessel or a retired item)' }),
});
export type Violation = z.infer<typeof ViolationSchema>;

export const VERDICTS = ['pass', 'fail', 'no-limit'] as const;
export type Verdict = (typeof VERDICTS)[number];

export const CalibrationResultsSchema = z.object({
  libraryVersion: z.string().meta({ description: 'Version of the computation library that computed these results' }),
  computedAt: z.iso.datetime(),
  verdict: z.enum(VERDICTS).meta({ description: 'fail if any point fails; pass if every point passes; no-limit when no limit is known' }),
  airDensityKgPerM3: dec('Air density used, kg/m3'),
  airDensitySource: z.enum(AIR_DENSITY_SOURCES),
  weightDensityKgPerM3: dec('Weight density used, kg/m3'),
  weightDensitySource: z.enum(['given', 'balance']),
  expansionCoefficientPerK: dec('The vessel’s cubic expansion coefficient used, 1/K'),
  acceptance: z.object({
    rule: z.string().meta({ description: 'How each point was judged' }),
    limitMl: dec('± limit on the systematic error at every point, mL').nullable(),
    randomLimitMl: dec('Limit on the standard deviation at every point, mL').nullable(),
    limitSource: z.enum(['class-table', 'lab-override', 'none']),
    limitReason: z.string().nullable(),
  }),
  points: z.array(GravimetricVolumeResponseSchema),
  warnings,
  traceability: z.object({
    checkedAt: z.iso.datetime(),
    violations: z.array(ViolationSchema).meta({ description: 'Rules broken and accepted by exception (empty when all were met)' }),
    exceptionReason: z.string().nullable(),
  }),
});
export type CalibrationResults = z.input<typeof CalibrationResultsSchema>;

const ids = {
  id: z.uuid(),
  labId: z.uuid(),
  vesselId: z.uuid(),
  performerId: z.uuid().meta({ description: 'Whose technique this characterises; the factor is theirs' }),
  enteredById: z.uuid().meta({ description: 'Who entered it: the performer, or a manager on their behalf' }),
  balanceId: z.uuid(),
  thermometerId: z.uuid(),
};
const nullableInstant = z.iso.datetime().nullable();

export const CalibrationSummarySchema = z.object({
  ...ids,
  state: z.enum(CALIBRATION_STATES),
  performedAt: z.iso.datetime(),
  deliveryMode: z.enum(['contain', 'deliver']),
  notes: z.string().nullable(),
  verdict: z.enum(VERDICTS).nullable(),
  libraryVersion: z.string().nullable(),
  submittedAt: nullableInstant,
  traceabilityException: z.string().nullable().meta({ description: 'The reason a broken traceability rule was accepted' }),
  reviewerId: z.uuid().nullable(),
  reviewedAt: nullableInstant,
  reviewNote: z.string().nullable(),
  voidedById: z.uuid().nullable(),
  voidedAt: nullableInstant,
  voidReason: z.string().nullable(),
  factor: z
    .object({ id: z.uuid(), state: z.enum(['current', 'superseded', 'withdrawn']) })
    .nullable()
    .meta({ description: 'The personal factor issued on approval, if any' }),
  version: z.number().int().meta({ description: 'Increments on every change; the ETag is "v<version>"' }),
  createdAt: z.iso.datetime(),
  updatedAt: z.iso.datetime(),
});
export type CalibrationSummary = z.input<typeof CalibrationSummarySchema>;

export const CalibrationSchema = CalibrationSummarySchema.extend({
  inputs: CalibrationInputsSchema,
  results: CalibrationResultsSchema.nullable().meta({ description: 'Frozen at submission; null for drafts and returned records' }),
});
export class CalibrationDto extends createZodDto(CalibrationSchema) {}
export type CalibrationView = z.input<typeof CalibrationSchema>;

export const CalibrationPageSchema = pageOf(CalibrationSummarySchema);
export class CalibrationPageDto extends createZodDto(CalibrationPageSchema) {}

export const ApprovalSchema = CalibrationSchema.extend({
  impact: z.object({
    factor: z
      .object({
        id: z.uuid(),
        current: z.boolean().meta({ description: 'False when a newer calibration’s factor was already current: this one is history' }),
        supersededFactorId: z.uuid().nullable(),
      })
      .nullable()
      .meta({ description: 'The factor issued (none for a failed calibration)' }),
    vesselQuarantined: z.boolean().meta({ description: 'The vessel was put in quarantine because the calibration failed' }),
    review: ImpactSchema.nullable().meta({
      description: 'For a failed calibration: every current factor on the vessel, marked for review, with the calibrations behind them',
    }),
  }),
});
export class ApprovalDto extends createZodDto(ApprovalSchema) {}
export type ApprovalView = z.input<typeof ApprovalSchema>;

export const VoidedSchema = CalibrationSchema.extend({
  withdrawnFactorId: z.uuid().nullable().meta({ description: 'The current factor withdrawn with an approved calibration' }),
});
export class VoidedDto extends createZodDto(VoidedSchema) {}
export type VoidedView = z.input<typeof VoidedSchema>;
