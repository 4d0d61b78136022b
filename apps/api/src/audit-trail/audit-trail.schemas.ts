import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { MAX_PAGE_SIZE } from '../common/pagination';
import { inStoredYears, storedYears } from '../common/calendar-range';
import { isPlainText, plainTextOnly } from '../common/plain-text';

/** The largest BIGINT. */
const MAX_SEQUENCE = 9_223_372_036_854_775_807n;

export const auditTrailQuerySchema = z
  .object({
    entityType: z
      .string()
      .min(1)
      .max(64)
      .refine(isPlainText, plainTextOnly)
      .optional()
      .meta({ description: 'e.g. vessel, balance, person, session', example: 'vessel' }),
    entityId: z.string().min(1).max(200).refine(isPlainText, plainTextOnly).optional(),
    actorId: z.uuid().optional().meta({ description: 'A person or service credential id' }),
    labId: z.uuid().optional(),
    from: z.iso
      .datetime({ offset: true })
      .refine(inStoredYears, storedYears)
      .optional()
      .meta({ description: 'Entries at or after this instant', example: '2026-01-01T00:00:00Z' }),
    to: z.iso
      .datetime({ offset: true })
      .refine(inStoredYears, storedYears)
      .optional()
      .meta({ description: 'Entries before this instant', example: '2027-01-01T00:00:00Z' }),
    limit: z.coerce.number().int().min(1).max(MAX_PAGE_SIZE).default(50),
    cursor: z
      .string()
      .regex(/^\d{1,19}$/, 'must be a cursor from a previous page')
      // Sequence numbers are BIGINT: nineteen digits can exceed it, and the database would refuse the query.
      .refine((v) => !/^\d+$/.test(v) || BigInt(v) <= MAX_SEQUENCE, 'must be a cursor from a previous page')
      .optional(),
  })
  .strict();

export class AuditTrailQueryDto extends createZodDto(auditTrailQuerySchema) {}
export type AuditTrailQuery = z.infer<typeof auditTrailQuerySchema>;
