import { ACCURACY_CLASSES, type AccuracyClass, VESSEL_KINDS, type VesselKind } from '@registry/metrology';
import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { characterCount, isPlainText, plainTextOnly } from '../common/plain-text';
import { SUBJECT_KINDS, subjectKindSchema } from '../due/due.schemas';

/** Kinds whose interval is a lab setting (balanceCheckWindowDays, factorValidityDays); their policies set the lead time only. */
export const LAB_SETTING_KINDS = ['balance-check', 'factor'] as const;

const days = (min: number, max: number, description: string) =>
  z
    .number({ error: 'must be a whole number of days' })
    .int({ error: 'must be a whole number of days' })
    .min(min, { error: `must be at least ${min}` })
    .max(max, { error: `must be at most ${max}` })
    .meta({ description });

const intervalDays = days(1, 3660, 'Days from the last calibration to the next due date (the starting interval when adaptive)');
const dueSoonDays = days(0, 366, 'Days before the due date from which the subject is due soon (a notice is raised)');

export const adaptiveSchema = z
  .strictObject({
    minIntervalDays: days(1, 3660, 'The interval never goes below this'),
    maxIntervalDays: days(1, 3660, 'The interval never goes above this'),
    maxStepDays: days(1, 3660, 'No single change moves the interval by more than this'),
    lengthenAfterPasses: z
      .number({ error: 'must be a whole number' })
      .int({ error: 'must be a whole number' })
      .min(1, { error: 'must be at least 1' })
      .max(20, { error: 'must be at most 20' })
      .meta({ description: 'Results within tolerance in a row that lengthen the interval once' }),
  })
  .meta({
    description:
      'Staircase (ILAC-G24 / OIML D 10, method 1), vessels only: a run of passing calibrations lengthens each vessel’s interval by a ' +
      'quarter, a failed one shortens it by half (each step at most maxStepDays, within the bounds); a failure never lengthens it.',
  });

const reason = z
  .string({ error: 'is required' })
  .trim()
  .refine(isPlainText, plainTextOnly)
  .refine((s) => characterCount(s) >= 3 && characterCount(s) <= 2000, { error: 'must be 3 to 2000 characters' })
  .meta({ description: 'Why: recorded with the interval change and in the audit trail', example: 'Annual review of the pipette history' });

export const createPolicySchema = z
  .strictObject({
    labId: z.uuid({ error: 'must be a UUID' }),
    subjectKind: subjectKindSchema,
    vesselKind: z
      .enum(VESSEL_KINDS as [VesselKind, ...VesselKind[]], { error: `must be one of ${VESSEL_KINDS.join(', ')}` })
      .optional()
      .meta({ description: 'Vessels only; absent: every kind' }),
    accuracyClass: z
      .enum(ACCURACY_CLASSES as [AccuracyClass, ...AccuracyClass[]], { error: `must be one of ${ACCURACY_CLASSES.join(', ')}` })
      .optional()
      .meta({ description: 'Vessels only; absent: every class' }),
    intervalDays: intervalDays.optional().meta({ description: 'Required, except for balance-check and factor (the lab’s settings)' }),
    dueSoonDays,
    adaptive: adaptiveSchema.optional(),
    reason,
  })
  .meta({
    example: {
      labId: '3f2c1e4a-7b6d-4c5e-9a8b-1d2e3f4a5b6c',
      subjectKind: 'vessel',
      vesselKind: 'one-mark-pipette',
      accuracyClass: 'A',
      intervalDays: 365,
      dueSoonDays: 30,
      reason: 'DW-CHEM pipette plan 2027',
    },
  });
export class CreatePolicyDto extends createZodDto(createPolicySchema) {}
export type CreatePolicy = z.output<typeof createPolicySchema>;

export const updatePolicySchema = z
  .strictObject({
    intervalDays: intervalDays.optional(),
    dueSoonDays: dueSoonDays.optional(),
    adaptive: adaptiveSchema.nullable().optional().meta({ description: 'null switches adaptive intervals off' }),
    reason,
  })
  .refine((v) => v.intervalDays !== undefined || v.dueSoonDays !== undefined || v.adaptive !== undefined, {
    error: 'give at least one of intervalDays, dueSoonDays, adaptive',
  });
export class UpdatePolicyDto extends createZodDto(updatePolicySchema) {}
export type UpdatePolicy = z.output<typeof updatePolicySchema>;

export const policyParamSchema = z.strictObject({ policyId: z.uuid({ error: 'must be a UUID' }) });
export class PolicyParamDto extends createZodDto(policyParamSchema) {}

export const policyListQuerySchema = pageQuerySchema
  .extend({ labId: z.uuid({ error: 'must be a UUID' }).optional(), subjectKind: subjectKindSchema.optional() })
  .strict();
export class PolicyListQueryDto extends createZodDto(policyListQuerySchema) {}
export type PolicyListQuery = z.output<typeof policyListQuerySchema>;

export const policySchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  subjectKind: z.enum(SUBJECT_KINDS),
  vesselKind: z.enum(VESSEL_KINDS as [VesselKind, ...VesselKind[]]).nullable(),
  accuracyClass: z.enum(ACCURACY_CLASSES as [AccuracyClass, ...AccuracyClass[]]).nullable(),
  intervalDays: z.number().int().nullable().meta({ description: 'null for balance-check and factor: the lab’s settings apply' }),
  dueSoonDays: z.number().int(),
  adaptive: adaptiveSchema.extend({ since: z.iso.datetime() }).nullable(),
  version: z.number().int(),
  createdAt: z.iso.datetime(),
  updatedAt: z.iso.datetime(),
});
export class PolicyDto extends createZodDto(policySchema) {}
export type PolicyView = z.infer<typeof policySchema>;

export const policyPageSchema = z.object({ items: z.array(policySchema), nextCursor: z.string().nullable() });
export class PolicyPageDto extends createZodDto(policyPageSchema) {}

export const changeListQuerySchema = pageQuerySchema
  .extend({
    labId: z.uuid({ error: 'must be a UUID' }).optional(),
    policyId: z.uuid({ error: 'must be a UUID' }).optional(),
    subjectId: z.uuid({ error: 'must be a UUID' }).optional(),
  })
  .strict();
export class ChangeListQueryDto extends createZodDto(changeListQuerySchema) {}
export type ChangeListQuery = z.output<typeof changeListQuerySchema>;

export const intervalChangeSchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  policyId: z.uuid(),
  subjectKind: z.enum(SUBJECT_KINDS),
  subjectId: z.uuid().nullable().meta({ description: 'null: the policy’s own interval' }),
  method: z.enum(['policy', 'staircase']),
  oldIntervalDays: z.number().int().nullable(),
  newIntervalDays: z.number().int(),
  reason: z.string(),
  approvedById: z.uuid().meta({ description: 'Who set the policy, or who approved the result that moved the interval' }),
  basedOnCalibrationId: z.uuid().nullable(),
  changedAt: z.iso.datetime(),
});
export type IntervalChangeView = z.infer<typeof intervalChangeSchema>;
export const changePageSchema = z.object({ items: z.array(intervalChangeSchema), nextCursor: z.string().nullable() });
export class ChangePageDto extends createZodDto(changePageSchema) {}
