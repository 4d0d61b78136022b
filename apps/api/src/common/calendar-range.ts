/**
 * Dates and instants a request may carry. zod accepts year 0000 and any UTC
 * offset, but PostgreSQL has no year 0 ("0001-01-01T00:00:00+14:00" is year 0
 * in UTC) and JavaScript writes years past 9999 with a sign: accepted values lie
 * in the years 0001 to 9999 (UTC), so none reaches the database to fail there.
 */
export function inStoredYears(value: string): boolean {
  const at = new Date(/^\d{4}-\d{2}-\d{2}$/.test(value) ? `${value}T00:00:00.000Z` : value);
  const year = at.getUTCFullYear();
  return !Number.isNaN(at.getTime()) && year >= 1 && year <= 9999;
}

/** Refinement options: `.refine(inStoredYears, storedYears)`. */
export const storedYears = { error: 'must lie in the years 0001 to 9999 (UTC)' };
