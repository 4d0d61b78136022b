import { z } from 'zod';

import { DomainError } from './problem/domain-error';

export const MAX_PAGE_SIZE = 200;

/** Query members shared by every list endpoint. */
export const pageQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(MAX_PAGE_SIZE).default(50),
  cursor: z.string().max(512).optional(),
});

export interface Page<T> {
  readonly items: T[];
  /** Opaque; pass as `cursor` to get the next page. Null on the last page. */
  readonly nextCursor: string | null;
}

/** Cursor = the sort key and id of the last row, base64url JSON. */
export function encodeCursor(sortValue: string | number | null, id: string): string {
  return Buffer.from(JSON.stringify([sortValue, id]), 'utf8').toString('base64url');
}

export function decodeCursor(cursor: string): { sortValue: string | number | null; id: string } {
  try {
    const parsed: unknown = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8'));
    if (
      Array.isArray(parsed) &&
      parsed.length === 2 &&
      typeof parsed[1] === 'string' &&
      ['string', 'number', 'object'].includes(typeof parsed[0])
    ) {
      return { sortValue: parsed[0] as string | number | null, id: parsed[1] };
    }
  } catch {
    // fall through
  }
  throw new DomainError('validation-failed', 'The cursor is not one this API issued.', [{ field: 'cursor', reason: 'invalid cursor' }]);
}

/** Builds a page from `limit + 1` fetched rows. */
export function toPage<T>(rows: T[], limit: number, cursorOf: (row: T) => string): Page<T> {
  const items = rows.slice(0, limit);
  const last = items[items.length - 1];
  return { items, nextCursor: rows.length > limit && last ? cursorOf(last) : null };
}
