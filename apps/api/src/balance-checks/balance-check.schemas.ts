import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { inStoredYears, storedYears } from '../common/calendar-range';
import { quantity, REQUIRED } from '../common/quantity';
import { notesSchema } from '../inventory/inventory.schemas';

/*
 * Request bodies of the routine balance checks. Strict objects (an unknown
 * member is a 400); quantities follow common/quantity.ts. Each kind names the
 * reference (check) weight used: a weight of the balance's lab, in service,
 * with a certificate that is not overdue.
 */

/** USP <41> asks for at least 10; more than this many readings in one list are refused. */
export const MAX_REPLICATES = 100;
/** A quick check takes one reading or a few. */
export const MAX_QUICK_READINGS = 10;
/** Centre plus at most this many off-centre positions. */
export const MAX_OFF_CENTRE_READINGS = 20;

const uuid = z.uuid({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a UUID') });
const referenceWeightId = uuid.meta({
  description: 'The check weight used: a reference weight of the balance’s lab, in service, its certificate not overdue',
  example: '7c0e9a52-3b1d-4f6e-8a2c-5d4e3f2a1b0c',
});
const readings = (description: string, min: number, max: number) =>
  z
    .array(quantity(description), REQUIRED)
    .min(min, { error: `needs at least ${min} reading${min === 1 ? '' : 's'}` })
    .max(max, { error: `accepts at most ${max} readings` });
const limitG = (what: string) => quantity(`The laboratory’s limit on ${what}, g`);

const common = {
  performedAt: z.iso
    .datetime({ offset: true, error: 'must be an ISO 8601 date-time with a zone, e.g. 2026-03-02T07:45:00Z' })
    .refine(inStoredYears, storedYears)
    .optional()
    .meta({
      description:
        'When the check was performed; default now. At most 5 minutes ahead of the server clock, and not before the ' +
        'latest check already recorded for the balance (checks are recorded in order).',
      example: '2026-03-02T07:45:00Z',
    }),
  notes: notesSchema.optional(),
};

const eccentricityReadings = {
  centreReadingG: quantity('Reading with the weight at the centre of the pan, g', '100.0000'),
  offCentreReadingsG: readings('A reading with the same weight off centre (usually the four corners), g', 1, MAX_OFF_CENTRE_READINGS),
  limitG: limitG('the largest |off-centre − centre|'),
};

export const QuickCheckSchema = z.strictObject({
  kind: z.literal('quick').meta({ description: 'One weight read once or a few times against the laboratory’s limit' }),
  referenceWeightId,
  readingsG: readings('A reading of the check weight, g', 1, MAX_QUICK_READINGS),
  limitG: limitG('|reading − certified value of the weight|'),
  ...common,
});

export const Usp41CheckSchema = z.strictObject({
  kind: z.literal('usp41').meta({ description: 'USP <41>: repeatability (and minimum weight) and accuracy, optionally eccentricity' }),
  referenceWeightId: referenceWeightId.meta({
    description:
      'The accuracy test weight: between 5 % and 100 % of the capacity, its certificate uncertainty at most a third of ' +
      '0.10 % of its value; also the repeatability weight unless repeatability names another',
  }),
  repeatability: z.strictObject({
    readingsG: readings('A replicate reading of the repeatability weight, g', 10, MAX_REPLICATES).meta({
      description: 'At least 10 replicate readings of one weight (USP <41>), g',
    }),
    referenceWeightId: referenceWeightId.optional().meta({ description: 'A different weight for the repeatability test, if one was used' }),
    smallestNetWeightG: quantity(
      'Smallest net weight the laboratory weighs on this balance, g; repeatability is then judged against it',
    ).optional(),
  }),
  accuracyReadingG: quantity('Reading of the accuracy test weight, g', '200.0003'),
  eccentricity: z.strictObject(eccentricityReadings).optional().meta({ description: 'Corner-load test with the same weight' }),
  ...common,
});

export const EccentricityCheckSchema = z.strictObject({
  kind: z.literal('eccentricity').meta({ description: 'Centre and off-centre readings of one weight against the laboratory’s limit' }),
  referenceWeightId,
  ...eccentricityReadings,
  ...common,
});

export const RecordCheckSchema = z.discriminatedUnion('kind', [QuickCheckSchema, Usp41CheckSchema, EccentricityCheckSchema], {
  error: (issue) => (issue.code === 'invalid_union' ? 'must be one of quick, usp41, eccentricity' : undefined),
});
/** A union cannot be a class: the controller validates with this schema explicitly, and documents this DTO. */
export const RecordCheckDto = namedDto('RecordBalanceCheckDto', createZodDto(RecordCheckSchema));
export type RecordCheck = z.output<typeof RecordCheckSchema>;
export type QuickCheck = z.output<typeof QuickCheckSchema>;
export type Usp41Check = z.output<typeof Usp41CheckSchema>;
export type EccentricityCheck = z.output<typeof EccentricityCheckSchema>;

export const BalanceParamSchema = z.strictObject({ balanceId: uuid });
/** Names a DTO made from a union (OpenAPI names schemas after the DTO class). */
export function namedDto<T extends object>(name: string, dto: T): T {
  Object.defineProperty(dto, 'name', { value: name });
  return dto;
}

export class BalanceParamDto extends createZodDto(BalanceParamSchema) {}

export const CheckParamSchema = z.strictObject({ balanceId: uuid, checkId: uuid });
export class CheckParamDto extends createZodDto(CheckParamSchema) {}

export const CheckListQuerySchema = pageQuerySchema.strict();
export class CheckListQueryDto extends createZodDto(CheckListQuerySchema) {}
export type CheckListQuery = z.output<typeof CheckListQuerySchema>;
