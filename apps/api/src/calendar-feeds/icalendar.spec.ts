import { escapeText, foldLine, renderCalendar } from './icalendar';

describe('iCalendar text (RFC 5545)', () => {
  it('escapes backslash, semicolon, comma and line breaks (3.3.11)', () => {
    expect(escapeText('a\\b;c,d\ne')).toBe('a\\\\b\\;c\\,d\\ne');
  });

  it('folds at 75 octets with CRLF and one space, never splitting a UTF-8 sequence (3.1)', () => {
    const line = `SUMMARY:${'é'.repeat(60)}`;
    const folded = foldLine(line);
    const physical = folded.split('\r\n');
    expect(physical.length).toBeGreaterThan(1);
    for (const p of physical) expect(Buffer.byteLength(p, 'utf8')).toBeLessThanOrEqual(75);
    expect(physical.slice(1).every((p) => p.startsWith(' '))).toBe(true);
    expect(physical.map((p, i) => (i === 0 ? p : p.slice(1))).join('')).toBe(line);
  });

  it('ends every line with CRLF and writes all-day events', () => {
    const text = renderCalendar({
      productId: '-//Test//EN',
      name: 'DW-CHEM',
      stamp: new Date('2026-12-01T08:00:00Z'),
      events: [{ uid: 'vessel-1-2026-12-15@test', date: '2026-12-15', summary: 'PIP-25-014 due', description: 'x' }],
    });
    expect(text.endsWith('\r\n')).toBe(true);
    expect(text.replace(/\r\n/g, '')).not.toMatch(/[\r\n]/);
    expect(text).toContain('DTSTART;VALUE=DATE:20261215\r\nDTEND;VALUE=DATE:20261216\r\n');
    expect(text).toContain('DTSTAMP:20261201T080000Z');
  });

  it('writes an event on 9999-12-31 with no end, which RFC 5545 3.6.1 reads as that one day', () => {
    const text = renderCalendar({
      productId: '-//Test//EN',
      name: 'DW-CHEM',
      stamp: new Date('2026-12-01T08:00:00Z'),
      events: [{ uid: 'weight-1-9999-12-31@test', date: '9999-12-31', summary: 'W-1 due', description: 'x' }],
    });
    expect(text).toContain('DTSTART;VALUE=DATE:99991231\r\nSUMMARY:W-1 due\r\n');
    expect(text).not.toContain('DTEND');
  });
});
