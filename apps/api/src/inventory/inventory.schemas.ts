import { Decimal } from '@registry/metrology';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { inStoredYears, storedYears } from '../common/calendar-range';
import { isPlainText, plainTextOnly } from '../common/plain-text';
import { quantity } from '../common/quantity';

/*
 * Building blocks shared by the four inventory resources (vessels, balances,
 * reference weights, environment instruments): the same words, limits and
 * formats everywhere, and the same checks as the database constraints.
 */

export const ITEM_STATUSES = ['in-service', 'quarantined', 'retired'] as const;
export type ItemStatus = (typeof ITEM_STATUSES)[number];

export const statusSchema = z.enum(ITEM_STATUSES).meta({
  description:
    'in-service: may be used; quarantined: kept out of use until reviewed; retired: out of use for good (items are never deleted)',
  example: 'in-service',
});

/** Same rule as the `*_asset_tag_format` CHECK constraints. */
export const ASSET_TAG_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._/-]{0,63}$/;
export const assetTagSchema = z
  .string()
  .regex(ASSET_TAG_PATTERN, {
    error: 'must be 1 to 64 characters: letters, digits, and . _ / - (starting with a letter or digit)',
  })
  .meta({ description: 'The label on the item, unique in the registry', example: 'VF-100-017' });

export { noControl } from '../common/plain-text';

/** A trimmed, non-empty text; send null in a PATCH to clear it. */
export const text = (max: number, description: string, example?: string) =>
  z
    .string()
    .trim()
    .min(1, { error: 'must not be empty (send null to clear it)' })
    .max(max, { error: `must be at most ${max} characters` })
    .refine(isPlainText, plainTextOnly)
    .meta({ description, ...(example === undefined ? {} : { example }) });

export const makerSerialSchema = text(100, "Maker's serial or batch number", '21.04-1187');
export const locationSchema = text(200, 'Where the item is kept', 'Room 2.14, bench 3');
export const notesSchema = text(2000, 'Free notes', 'Bought with the 2024 titration set.');

/** Why a status or limit changed; written to the audit entry. */
export const reasonSchema = text(500, 'Why this change is made; required when the status or an acceptance limit changes', 'Chipped tip');

/** A calendar date (no time, no zone). */
export const dateOnly = (description: string, example: string) =>
  z.iso.date({ error: 'must be a date YYYY-MM-DD' }).refine(inStoredYears, storedYears).meta({ description, example });

export interface StoredNumeric {
  /** Total significant digits of the column (NUMERIC(precision, scale)). */
  readonly precision: number;
  readonly scale: number;
  /** Positive (the default) or also zero. */
  readonly zeroAllowed?: boolean;
}

/**
 * A decimal quantity stored in a NUMERIC(precision, scale) column: the shared
 * edge format (common/quantity.ts) plus the column's limits, so nothing is
 * rounded silently and nothing overflows the column.
 */
export function storedQuantity(description: string, example: string, column: StoredNumeric) {
  const integerDigits = column.precision - column.scale;
  const ceiling = new Decimal(10).pow(integerDigits);
  return quantity(description, example)
    .transform((v, ctx) => {
      // One Decimal per value: the CSV import checks tens of thousands of these.
      const d = new Decimal(v);
      const problem = (column.zeroAllowed ? d.isNegative() : !d.greaterThan(0))
        ? column.zeroAllowed
          ? 'must not be negative'
          : 'must be greater than 0'
        : d.decimalPlaces() > column.scale
          ? `must have at most ${column.scale} decimal places`
          : !d.abs().lessThan(ceiling)
            ? `must be less than 1e${integerDigits}`
            : null;
      if (problem === null) return d.toFixed();
      ctx.addIssue({ code: 'custom', message: problem, input: v });
      return z.NEVER;
    })
    .meta({ description, example });
}

/** The decimal string form of a stored NUMERIC, as returned (plain notation, no trailing zeros). */
export const stored = (description: string, example: string) =>
  z.string().meta({ description: `${description} (decimal string, plain notation)`, example });

/** Members every inventory response starts with. */
export const itemIds = {
  id: z.uuid(),
  labId: z.uuid().meta({ description: 'The lab that owns the item' }),
};

/** Members every inventory response ends with. */
export const itemStamps = {
  version: z.number().int().meta({ description: 'Increments on every change; the ETag is "v<version>"', example: 1 }),
  createdAt: z.iso.datetime().meta({ example: '2026-03-02T08:15:00.000Z' }),
  updatedAt: z.iso.datetime().meta({ example: '2026-03-02T08:15:00.000Z' }),
};

/** Query members of every inventory list; `sort` takes a field name, `-` for descending. */
export function listQuerySchema<const S extends readonly [string, ...string[]]>(sorts: S) {
  const values = sorts.flatMap((s) => [s, `-${s}`]) as [string, ...string[]];
  return pageQuerySchema.strict().extend({
    labId: z.uuid().optional().meta({ description: 'Only this lab’s items (must be a lab you can read; others give an empty list)' }),
    status: statusSchema.optional(),
    q: z
      .string()
      .trim()
      .min(1)
      .max(100)
      .refine(isPlainText, plainTextOnly)
      .optional()
      .meta({ description: 'Case-insensitive text search in asset tag, maker serial and location', example: 'PIP-25' }),
    sort: z
      .enum(values)
      .default(sorts[0])
      .meta({ description: `Sort field, \`-\` for descending: ${values.join(', ')}. Ties are broken by id.`, example: sorts[0] }),
  });
}

export const dueBeforeSchema = dateOnly('Only items whose calibration or certificate is due before this date', '2026-07-01').optional();

export const pageOf = <T extends z.ZodType>(item: T) =>
  z.object({
    items: z.array(item),
    nextCursor: z.string().nullable().meta({ description: 'Pass as `cursor` for the next page; null on the last page' }),
  });
