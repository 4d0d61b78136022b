/*
 * Between Prisma rows and the API-shaped records the inventory services use:
 * NUMERIC columns as plain decimal strings, DATE columns as YYYY-MM-DD,
 * timestamps as ISO 8601 strings.
 */

interface DecimalLike {
  toFixed(): string;
}

/** A stored NUMERIC as a plain decimal string without trailing zeros. */
export const decimalOut = (value: DecimalLike): string => value.toFixed();
export const decimalOrNull = (value: DecimalLike | null): string | null => (value === null ? null : value.toFixed());

/** A DATE column (read as UTC midnight) as YYYY-MM-DD. */
export const dayOrNull = (value: Date | null): string | null => (value === null ? null : value.toISOString().slice(0, 10));

export const dayIn = (value: string): Date => new Date(`${value}T00:00:00.000Z`);

/** Record changes as Prisma data: the named date fields become Dates, everything else as is. */
export function toData(changes: Readonly<Record<string, unknown>>, dateFields: readonly string[] = []): Record<string, unknown> {
  return Object.fromEntries(Object.entries(changes).map(([k, v]) => [k, dateFields.includes(k) && typeof v === 'string' ? dayIn(v) : v]));
}
