import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';

/*
 * Filtering, sorting and keyset pagination shared by the inventory lists.
 * Builds plain Prisma `where` / `orderBy` objects over field names that are the
 * same in the API and in the Prisma models; each repository hands them to its
 * own model. Pages continue after (sort key, id) of the last row, never by
 * OFFSET, so concurrent inserts cause neither duplicates nor gaps.
 */

export type SortKind = 'text' | 'decimal' | 'timestamp' | 'date';

export interface SortField {
  readonly kind: SortKind;
  /** Nullable keys sort last in both directions. */
  readonly nullable?: boolean;
}

export interface ListSpec {
  /** API sort name (= model field) → how to compare it. */
  readonly sorts: Readonly<Record<string, SortField>>;
  /** Fields searched by `q` (case-insensitive substring). */
  readonly searchFields: readonly string[];
  /** The calibration/certificate due date `dueBefore` applies to. */
  readonly dueField?: string;
}

export interface ListFilters {
  readonly labId?: string | undefined;
  readonly status?: string | undefined;
  readonly q?: string | undefined;
  readonly dueBefore?: string | undefined;
  /** Further exact-match filters (e.g. kind), by model field. */
  readonly equals?: Readonly<Record<string, string | undefined>>;
  readonly sort: string;
  readonly limit: number;
  readonly cursor?: string | undefined;
}

export interface ListArgs {
  readonly where: Record<string, unknown>;
  readonly orderBy: Record<string, unknown>[];
  readonly take: number;
}

type Dir = 'asc' | 'desc';

/** The plain decimal strings pages carry for NUMERIC sort keys (a few dozen digits at most). */
const PLAIN_DECIMAL = /^-?\d{1,40}(?:\.\d{1,40})?$/;

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function parseSort(spec: ListSpec, sort: string): { field: string; dir: Dir; key: SortField } {
  const dir: Dir = sort.startsWith('-') ? 'desc' : 'asc';
  const field = dir === 'desc' ? sort.slice(1) : sort;
  const key = spec.sorts[field];
  if (!key) throw new DomainError('validation-failed', `Cannot sort by ${field}.`, [{ field: 'sort', reason: 'unknown sort field' }]);
  return { field, dir, key };
}

const badCursor = () =>
  new DomainError('validation-failed', 'The cursor does not belong to this list and sort.', [
    { field: 'cursor', reason: 'invalid cursor' },
  ]);

/** The cursor's sort value as the database compares it. */
function cursorValue(key: SortField, value: string | number | null): unknown {
  if (value === null) {
    if (!key.nullable) throw badCursor();
    return null;
  }
  if (typeof value !== 'string') throw badCursor();
  switch (key.kind) {
    case 'text':
      return value;
    case 'decimal':
      // Only the plain notation this API writes: "1e100000000" would be expanded to a hundred million digits.
      if (!PLAIN_DECIMAL.test(value)) throw badCursor();
      return value;
    case 'timestamp':
      return cursorInstant(value);
    case 'date':
      // A stored DATE as YYYY-MM-DD: the same range as a stored instant.
      if (!/^\d{4}-\d{2}-\d{2}$/.test(value)) throw badCursor();
      return cursorInstant(`${value}T00:00:00.000Z`);
  }
}

/** Rows after (value, id) in the sort order; null keys (of nullable fields) come last. */
function after(field: string, dir: Dir, nullable: boolean, value: unknown, id: string): Record<string, unknown> {
  const beyond = dir === 'asc' ? 'gt' : 'lt';
  if (value === null) return { AND: [{ [field]: null }, { id: { [beyond]: id } }] };
  const later = [{ [field]: { [beyond]: value } }, { AND: [{ [field]: value }, { id: { [beyond]: id } }] }];
  return { OR: nullable ? [...later, { [field]: null }] : later };
}

/**
 * Prisma arguments for one page, or null when the caller asked for a lab they
 * cannot read (an empty page: the lab's existence is not revealed).
 */
export function listArgs(spec: ListSpec, readable: 'all' | readonly string[], filters: ListFilters): ListArgs | null {
  const and: Record<string, unknown>[] = [];
  if (filters.labId !== undefined) {
    if (readable !== 'all' && !readable.includes(filters.labId)) return null;
    and.push({ labId: filters.labId });
  } else if (readable !== 'all') {
    and.push({ labId: { in: [...readable] } });
  }
  if (filters.status !== undefined) and.push({ status: filters.status });
  for (const [field, value] of Object.entries(filters.equals ?? {})) if (value !== undefined) and.push({ [field]: value });
  if (filters.dueBefore !== undefined) {
    if (!spec.dueField) throw new Error('dueBefore on a list without a due date');
    and.push({ [spec.dueField]: { lt: new Date(`${filters.dueBefore}T00:00:00.000Z`) } });
  }
  if (filters.q !== undefined) {
    // Prisma passes `contains` to ILIKE as is: match %, _ and \ literally.
    const q = filters.q.replace(/[\\%_]/g, (c) => `\\${c}`);
    and.push({ OR: spec.searchFields.map((f) => ({ [f]: { contains: q, mode: 'insensitive' } })) });
  }
  const { field, dir, key } = parseSort(spec, filters.sort);
  if (filters.cursor !== undefined) {
    const cursor = decodeCursor(filters.cursor);
    if (!UUID.test(cursor.id)) throw badCursor();
    and.push(after(field, dir, key.nullable === true, cursorValue(key, cursor.sortValue), cursor.id));
  }
  const order = key.nullable ? { sort: dir, nulls: 'last' } : dir;
  return { where: and.length ? { AND: and } : {}, orderBy: [{ [field]: order }, { id: dir }], take: filters.limit + 1 };
}

/** The page from `limit + 1` rows of API-shaped records (sort keys as strings or null). */
export function pageFrom<T extends { readonly id: string }>(spec: ListSpec, filters: ListFilters, rows: T[]): Page<T> {
  const { field } = parseSort(spec, filters.sort);
  return toPage(rows, filters.limit, (row) => {
    const value = (row as unknown as Record<string, unknown>)[field];
    return encodeCursor(value === null || value === undefined ? null : String(value), row.id);
  });
}
