import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { inStoredYears, storedYears } from '../common/calendar-range';
import { pageQuerySchema } from '../common/pagination';
import { SUBJECT_KINDS, subjectKindSchema } from '../due/due.schemas';

export const EVENT_KINDS = ['due-soon', 'overdue'] as const;
const eventKindSchema = z.enum(EVENT_KINDS, { error: `must be one of ${EVENT_KINDS.join(', ')}` });

const instant = (description: string) =>
  z.iso
    .datetime({ offset: true, error: 'must be an ISO 8601 date-time with a zone, e.g. 2026-12-01T00:00:00Z' })
    .refine(inStoredYears, storedYears)
    .meta({ description, example: '2026-12-01T00:00:00Z' });

export const noticeListQuerySchema = pageQuerySchema
  .extend({
    labId: z.uuid({ error: 'must be a UUID' }).optional(),
    acknowledged: z
      .enum(['true', 'false'], { error: 'must be true or false' })
      .transform((v) => v === 'true')
      .optional()
      .meta({ description: 'true: only acknowledged notices; false: only those still open' }),
    eventKind: eventKindSchema.optional(),
    subjectKind: subjectKindSchema.optional(),
    personId: z.uuid({ error: 'must be a UUID' }).optional().meta({ description: 'Only notices about this person’s factors' }),
    raisedFrom: instant('Raised at or after this instant').optional(),
    raisedBefore: instant('Raised before this instant').optional(),
  })
  .strict();
export class NoticeListQueryDto extends createZodDto(noticeListQuerySchema) {}
export type NoticeListQuery = z.output<typeof noticeListQuerySchema>;

export const noticeParamSchema = z.strictObject({ noticeId: z.uuid({ error: 'must be a UUID' }) });
export class NoticeParamDto extends createZodDto(noticeParamSchema) {}

export const noticeSchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  eventKind: eventKindSchema,
  subjectKind: z.enum(SUBJECT_KINDS),
  subjectId: z.uuid(),
  subjectLabel: z.string(),
  personId: z.uuid().nullable().meta({ description: 'The factor’s holder; null for items' }),
  dueOn: z.iso.date().meta({ description: 'The due date announced (lab’s zone); it names the due cycle' }),
  raisedAt: z.iso.datetime(),
  detail: z.record(z.string(), z.unknown()),
  recipientIds: z.array(z.uuid()).meta({ description: 'Who the notice is for: the lab’s managers, or the factor’s holder' }),
  acknowledgedAt: z.iso.datetime().nullable(),
  acknowledgedById: z.uuid().nullable(),
});
export class NoticeDto extends createZodDto(noticeSchema) {}
export type NoticeView = z.infer<typeof noticeSchema>;

export const noticePageSchema = z.object({ items: z.array(noticeSchema), nextCursor: z.string().nullable() });
export class NoticePageDto extends createZodDto(noticePageSchema) {}
