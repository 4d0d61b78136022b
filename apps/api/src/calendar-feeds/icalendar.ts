/*
 * The small part of iCalendar (RFC 5545) a due-date feed needs: all-day
 * events, text escaping (3.3.11), lines folded at 75 octets (3.1) and CRLF
 * line ends. No dependency: the format is simple enough, and a parser checks
 * the output in the tests.
 */

export interface AllDayEvent {
  /** Stable per subject and due cycle, so calendar programs update rather than duplicate. */
  readonly uid: string;
  /** YYYY-MM-DD */
  readonly date: string;
  readonly summary: string;
  readonly description: string;
  readonly categories?: readonly string[];
}

export interface CalendarDocument {
  readonly productId: string;
  readonly name: string;
  /** When the feed was generated (DTSTAMP of each event). */
  readonly stamp: Date;
  readonly events: readonly AllDayEvent[];
}

/** TEXT values: backslash, semicolon, comma and line breaks escaped (RFC 5545, 3.3.11). */
export function escapeText(value: string): string {
  return value
    .replace(/\\/g, '\\\\')
    .replace(/;/g, '\\;')
    .replace(/,/g, '\\,')
    .replace(/\r\n|\r|\n/g, '\\n');
}

/** Folds a content line so no physical line exceeds 75 octets, never inside a UTF-8 sequence (RFC 5545, 3.1). */
export function foldLine(line: string): string {
  const parts: string[] = [];
  let current = '';
  let octets = 0;
  for (const ch of line) {
    const size = Buffer.byteLength(ch, 'utf8');
    // Continuation lines start with one space, which counts toward their 75.
    const limit = parts.length === 0 ? 75 : 74;
    if (octets + size > limit) {
      parts.push(current);
      current = '';
      octets = 0;
    }
    current += ch;
    octets += size;
  }
  parts.push(current);
  return parts.join('\r\n ');
}

const basicDate = (day: string) => day.replace(/-/g, '');
/** The last date the service stores and speaks (years 0001 to 9999). */
const LAST_DAY = '9999-12-31';
const nextDay = (day: string) => new Date(Date.parse(`${day}T00:00:00Z`) + 86_400_000).toISOString().slice(0, 10);
const utcStamp = (at: Date) =>
  at
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d{3}/, '');

export function renderCalendar(doc: CalendarDocument): string {
  const lines = [
    'BEGIN:VCALENDAR',
    'VERSION:2.0',
    `PRODID:${doc.productId}`,
    'CALSCALE:GREGORIAN',
    'METHOD:PUBLISH',
    `NAME:${escapeText(doc.name)}`,
  ];
  const stamp = utcStamp(doc.stamp);
  for (const e of doc.events) {
    lines.push(
      'BEGIN:VEVENT',
      `UID:${e.uid}`,
      `DTSTAMP:${stamp}`,
      `DTSTART;VALUE=DATE:${basicDate(e.date)}`,
      // The day after 9999-12-31 has no four-digit year: a DATE start with no end lasts that one day (3.6.1).
      ...(e.date < LAST_DAY ? [`DTEND;VALUE=DATE:${basicDate(nextDay(e.date))}`] : []),
      `SUMMARY:${escapeText(e.summary)}`,
      `DESCRIPTION:${escapeText(e.description)}`,
      ...(e.categories?.length ? [`CATEGORIES:${e.categories.map(escapeText).join(',')}`] : []),
      'TRANSP:TRANSPARENT',
      'END:VEVENT',
    );
  }
  lines.push('END:VCALENDAR');
  return lines.map(foldLine).join('\r\n') + '\r\n';
}
