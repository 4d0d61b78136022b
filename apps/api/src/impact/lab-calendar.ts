/*
 * Due dates (certificates, external calibrations) are calendar dates in the
 * lab's own time zone: an item due on 2026-05-31 may be used all that day
 * there, and is overdue from the next local midnight.
 */

const formatters = new Map<string, Intl.DateTimeFormat>();

function partsIn(at: Date, timeZone: string): Record<string, number> {
  let f = formatters.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-US', {
      timeZone,
      hourCycle: 'h23',
      year: 'numeric',
      month: 'numeric',
      day: 'numeric',
      hour: 'numeric',
      minute: 'numeric',
      second: 'numeric',
    });
    formatters.set(timeZone, f);
  }
  return Object.fromEntries(f.formatToParts(at).map((p) => [p.type, Number(p.value)]));
}

/** The calendar date (YYYY-MM-DD) of an instant in a time zone. */
export function localDate(at: Date, timeZone: string): string {
  const p = partsIn(at, timeZone);
  const pad = (n: number | undefined, width = 2) => String(n ?? 0).padStart(width, '0');
  return `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)}`;
}

/** How far the zone's wall clock is ahead of UTC at that instant, ms. */
function offsetMs(at: Date, timeZone: string): number {
  const p = partsIn(at, timeZone);
  const wall = Date.UTC(p.year ?? 0, (p.month ?? 1) - 1, p.day ?? 1, p.hour ?? 0, p.minute ?? 0, p.second ?? 0);
  return wall - Math.floor(at.getTime() / 1000) * 1000;
}

/** The first instant of a calendar date (YYYY-MM-DD) in a time zone. */
export function startOfLocalDay(date: string, timeZone: string): Date {
  const midnightUtc = Date.parse(`${date}T00:00:00.000Z`);
  // Twice: the offset at the first guess may differ from the one at the answer across a DST change.
  let t = midnightUtc - offsetMs(new Date(midnightUtc), timeZone);
  t = midnightUtc - offsetMs(new Date(t), timeZone);
  return new Date(t);
}

/** True when an item due on `due` (a calendar date) is overdue at `at` in the lab's time zone. */
export function isOverdue(due: string, at: Date, timeZone: string): boolean {
  return localDate(at, timeZone) > due;
}
