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

/** Every row id is a UUID; a cursor naming anything else was not issued here (and would fail in the database). */
const ROW_ID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Cursor = the sort key (a string, or null for an empty key) and id of the last row, base64url JSON. */
export function encodeCursor(sortValue: string | null, id: string): string {
  return Buffer.from(JSON.stringify([sortValue, id]), 'utf8').toString('base64url');
}

const invalidCursor = () =>
  new DomainError('validation-failed', 'The cursor is not one this API issued.', [{ field: 'cursor', reason: 'invalid cursor' }]);

/** Instants as cursors carry them (toISOString of a stored time): years 0001 to 9999, all within PostgreSQL's range. */
const STORED_INSTANT = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/;

/** The instant a time-ordered page continues after; anything else is a 400, never a query the database refuses. */
export function cursorInstant(sortValue: string | null): Date {
  const at = typeof sortValue === 'string' && STORED_INSTANT.test(sortValue) ? new Date(sortValue) : null;
  if (!at || Number.isNaN(at.getTime()) || at.getUTCFullYear() < 1) throw invalidCursor();
  return at;
}

export function decodeCursor(cursor: string): { sortValue: string | null; id: string } {
  try {
    const parsed: unknown = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8'));
    if (
      Array.isArray(parsed) &&
      parsed.length === 2 &&
      // No stored key holds NUL (PostgreSQL refuses it in text, and in a query).
      ((typeof parsed[0] === 'string' && !parsed[0].includes('\u0000')) || parsed[0] === null) &&
      typeof parsed[1] === 'string' &&
      ROW_ID.test(parsed[1])
    ) {
      return { sortValue: parsed[0], id: parsed[1] };
    }
  } catch {
    // fall through
  }
  throw invalidCursor();
}

/** Builds a page from `limit + 1` fetched rows. */
export function toPage<T>(rows: T[], limit: number, cursorOf: (row: T) => string): Page<T> {
  const items = rows.slice(0, limit);
  const last = items[items.length - 1];
  return { items, nextCursor: rows.length > limit && last ? cursorOf(last) : null };
}
