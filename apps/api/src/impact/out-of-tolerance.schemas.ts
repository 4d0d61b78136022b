import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { ITEM_STATUSES, noControl } from '../inventory/inventory.schemas';
import { ImpactSchema } from './impact.schemas';

/** Control characters other than tab and line breaks (as the inventory texts refuse them). */
const CONTROL = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/;
/** A missing member reads "is required"; anything else gets `message`. */
export const orRequired = (message: string) => (issue: { input?: unknown }) => (issue.input === undefined ? 'is required' : message);

export const OutOfToleranceRequestSchema = z
  .strictObject({
    foundAt: z.iso
      .datetime({ offset: true, error: orRequired('must be an ISO 8601 date-time with a zone, e.g. 2026-03-02T10:30:00Z') })
      .meta({ description: 'When it was found out of tolerance (at most 5 minutes ahead of the server clock)' }),
    reason: z
      .string({ error: orRequired('must be a string') })
      .trim()
      .min(3, { error: 'must be at least 3 characters' })
      .max(500, { error: 'must be at most 500 characters' })
      .refine((s) => !CONTROL.test(s), noControl)
      .meta({ description: 'What was found: written to the instrument’s audit entry and to every factor marked for review' }),
  })
  .meta({
    example: { foundAt: '2026-03-02T10:30:00Z', reason: 'Reads 0.4 K high against the reference thermometer at 20 °C (limit 0.1 K)' },
  });
export class OutOfToleranceRequestDto extends createZodDto(OutOfToleranceRequestSchema) {}
export type OutOfToleranceRequest = z.output<typeof OutOfToleranceRequestSchema>;

export const InstrumentParamSchema = z.strictObject({ instrumentId: z.uuid({ error: 'must be a UUID' }) });
export class InstrumentParamDto extends createZodDto(InstrumentParamSchema) {}

export const OutOfToleranceResponseSchema = z.object({
  instrument: z.object({
    id: z.uuid(),
    assetTag: z.string(),
    kind: z.string(),
    calibrationDate: z.string().nullable().meta({ description: 'Its last calibration (YYYY-MM-DD): the impact starts that day' }),
  }),
  foundAt: z.iso.datetime(),
  reason: z.string(),
  status: z.object({
    before: z.enum(ITEM_STATUSES),
    after: z.enum(ITEM_STATUSES),
    reason: z.string().meta({ description: 'Why the status changed or stayed' }),
  }),
  impact: ImpactSchema,
});
export class OutOfToleranceResponseDto extends createZodDto(OutOfToleranceResponseSchema) {}
export type OutOfToleranceResponse = z.input<typeof OutOfToleranceResponseSchema>;
