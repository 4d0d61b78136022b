import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { inStoredYears, storedYears } from '../common/calendar-range';
import { pageQuerySchema } from '../common/pagination';

/*
 * Requests of /v1/exports. An export names a report, a format, the labs (one,
 * several, or every lab the caller may export), a period and the instant the
 * registry is read "as of"; the same request with the same as-of gives the same
 * bytes, so a file can be reproduced and checked later.
 */

export const REPORT_KINDS = [
  'inventory-register',
  'calibration-log',
  'factor-register',
  'balance-check-log',
  'audit-trail',
  'overdue-summary',
] as const;
export type ReportKind = (typeof REPORT_KINDS)[number];

export const EXPORT_FORMATS = ['csv', 'ndjson', 'pdf'] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

export const EXPORT_STATES = ['streaming', 'completed', 'aborted'] as const;

/** More labs than any registry holds; keeps the request small. */
export const MAX_EXPORT_LABS = 100;

const instant = (description: string, example: string) =>
  z.iso
    .datetime({ offset: true, abort: true, error: 'must be an ISO 8601 date-time with a zone, e.g. 2026-01-01T00:00:00Z' })
    .refine(inStoredYears, storedYears)
    .meta({ description, example });

const uuid = z.uuid({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a UUID') });

export const CreateExportSchema = z
  .strictObject({
    report: z.enum(REPORT_KINDS, { error: `must be one of ${REPORT_KINDS.join(', ')}` }).meta({
      description:
        'inventory-register: every item with its status, last calibration or check, next due date and overdue flag; ' +
        'calibration-log: calibrations performed in the period with inputs, results, verdict, performer and reviewer; ' +
        'factor-register: personal factors valid in the period with their superseded history; ' +
        'balance-check-log: routine checks in the period with minimum weights; ' +
        'audit-trail: audit entries of the period with the hash-chain verification; ' +
        'overdue-summary: what was used while overdue or under a traceability exception, and by whom, and what is overdue at the as-of instant',
      example: 'calibration-log',
    }),
    format: z.enum(EXPORT_FORMATS, { error: `must be one of ${EXPORT_FORMATS.join(', ')}` }).meta({
      description: 'csv (RFC 4180, UTF-8, header row), ndjson (one JSON object per line) or pdf (paginated document)',
      example: 'csv',
    }),
    labIds: z
      .array(uuid)
      .min(1, { error: 'needs at least one lab; leave labIds out for every lab you may export' })
      .max(MAX_EXPORT_LABS, { error: `accepts at most ${MAX_EXPORT_LABS} labs` })
      .refine((ids) => new Set(ids.map((id) => id.toLowerCase())).size === ids.length, { error: 'must not name a lab twice' })
      .optional()
      .meta({
        description: 'The labs to report on. Left out: every lab for administrators and auditors, the labs you manage for lab managers.',
      }),
    from: instant('Start of the period (inclusive)', '2026-01-01T00:00:00Z'),
    to: instant('End of the period (exclusive)', '2027-01-01T00:00:00Z'),
    asOf: instant(
      'Read the registry as it stood at this instant: rows recorded, performed, reviewed or superseded later are left out. ' +
        'Default: now. Not in the future.',
      '2026-12-31T23:59:59Z',
    ).optional(),
  })
  .refine((b) => new Date(b.to).getTime() > new Date(b.from).getTime(), { error: 'must be after from', path: ['to'] });
export class CreateExportDto extends createZodDto(CreateExportSchema) {}
export type CreateExport = z.output<typeof CreateExportSchema>;

export const ExportListQuerySchema = pageQuerySchema
  .extend({
    report: z.enum(REPORT_KINDS).optional(),
    state: z.enum(EXPORT_STATES).optional(),
  })
  .strict();
export class ExportListQueryDto extends createZodDto(ExportListQuerySchema) {}
export type ExportListQuery = z.output<typeof ExportListQuerySchema>;

export const ExportParamSchema = z.strictObject({ exportId: uuid });
export class ExportParamDto extends createZodDto(ExportParamSchema) {}

export const VerifyDigestSchema = z.strictObject({
  sha256: z
    .string({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a string') })
    .regex(/^[0-9a-fA-F]{64}$/, { error: 'must be 64 hexadecimal digits (a SHA-256 digest)' })
    .meta({
      description: 'SHA-256 of an exported file, hexadecimal',
      example: '9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08',
    }),
});
export class VerifyDigestDto extends createZodDto(VerifyDigestSchema) {}
export type VerifyDigest = z.output<typeof VerifyDigestSchema>;
