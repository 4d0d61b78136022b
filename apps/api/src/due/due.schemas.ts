import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';

/** What can fall due: the values of notices.subject_kind and due_dates.subject_kind. */
export const SUBJECT_KINDS = ['vessel', 'balance-calibration', 'balance-check', 'reference-weight', 'instrument', 'factor'] as const;
export type SubjectKind = (typeof SUBJECT_KINDS)[number];

export const DUE_STATES = ['current', 'due-soon', 'overdue'] as const;
export type DueState = (typeof DUE_STATES)[number];

export const DUE_BASES = ['registration', 'interval', 'certificate', 'failed-result', 'factor-validity'] as const;

export const subjectKindSchema = z.enum(SUBJECT_KINDS, { error: `must be one of ${SUBJECT_KINDS.join(', ')}` }).meta({
  description:
    'vessel (its last approved calibration), balance-calibration (external, with certificate), balance-check (routine), ' +
    'reference-weight, instrument (environment instruments), factor (a person’s current factor)',
});

const uuid = (description: string) => z.uuid({ error: 'must be a UUID' }).meta({ description });

export const dueListQuerySchema = pageQuerySchema
  .extend({
    labId: uuid('Only this lab').optional(),
    subjectKind: subjectKindSchema.optional(),
    state: z.enum(DUE_STATES, { error: `must be one of ${DUE_STATES.join(', ')}` }).optional(),
    withinDays: z.coerce
      .number({ error: 'must be a whole number of days' })
      .int({ error: 'must be a whole number of days' })
      .min(0, { error: 'must be 0 or more' })
      .max(3660, { error: 'must be at most 3660' })
      .optional()
      .meta({ description: 'Only subjects due within this many days from today (in each lab’s zone); overdue ones included' }),
    personId: uuid('Only this person’s current factors').optional(),
  })
  .strict();
export class DueListQueryDto extends createZodDto(dueListQuerySchema) {}
export type DueListQuery = z.output<typeof dueListQuerySchema>;

const isoDate = z.iso.date().meta({ description: 'A calendar date in the lab’s time zone', example: '2026-12-15' });

export const dueItemSchema = z.object({
  labId: z.uuid(),
  subjectKind: z.enum(SUBJECT_KINDS),
  subjectId: z.uuid(),
  subjectLabel: z.string().meta({ description: 'Asset tag; for a factor "asset tag · person"', example: 'PIP-25-014' }),
  personId: z.uuid().nullable().meta({ description: 'The factor’s holder; null for items' }),
  dueOn: isoDate.meta({ description: 'The day by which the work is due (lab’s zone); overdue the day after' }),
  dueSoonOn: isoDate.meta({ description: 'From this day on the subject is due soon' }),
  state: z.enum(DUE_STATES),
  daysUntilDue: z.number().int().meta({ description: 'Days from today (lab’s zone) to the due date; negative when overdue' }),
  lastDoneAt: z.iso.datetime().nullable().meta({ description: 'The last calibration, check or certificate date; null if never' }),
  intervalDays: z.number().int().nullable().meta({ description: 'The interval in force, when the due date comes from one' }),
  basis: z.enum(DUE_BASES).meta({
    description:
      'registration (never done: due from its registration), interval (last done + interval), certificate (the due date ' +
      'on record), failed-result (a failed check or calibration: due that day), factor-validity (the factor’s end)',
  }),
});
export class DueItemDto extends createZodDto(dueItemSchema) {}
export type DueItemView = z.infer<typeof dueItemSchema>;

export const duePageSchema = z.object({ items: z.array(dueItemSchema), nextCursor: z.string().nullable() });
export class DuePageDto extends createZodDto(duePageSchema) {}
