import { isOverdue, localDate, startOfLocalDay } from './lab-calendar';

describe('lab calendar', () => {
  it('gives the calendar date of an instant in the lab’s time zone', () => {
    // 23:30 UTC on 2 March is already 3 March in Vienna (UTC+1 in winter), still 2 March in New York.
    const at = new Date('2026-03-02T23:30:00Z');
    expect(localDate(at, 'Europe/Vienna')).toBe('2026-03-03');
    expect(localDate(at, 'America/New_York')).toBe('2026-03-02');
    expect(localDate(at, 'UTC')).toBe('2026-03-02');
  });

  it('finds the first instant of a local day, across daylight-saving changes', () => {
    expect(startOfLocalDay('2026-03-03', 'Europe/Vienna').toISOString()).toBe('2026-03-02T23:00:00.000Z');
    // Vienna moves to UTC+2 at 02:00 on 29 March 2026 and back at 03:00 on 25 October 2026.
    expect(startOfLocalDay('2026-03-29', 'Europe/Vienna').toISOString()).toBe('2026-03-28T23:00:00.000Z');
    expect(startOfLocalDay('2026-03-30', 'Europe/Vienna').toISOString()).toBe('2026-03-29T22:00:00.000Z');
    expect(startOfLocalDay('2026-10-26', 'Europe/Vienna').toISOString()).toBe('2026-10-25T23:00:00.000Z');
    expect(startOfLocalDay('2026-07-01', 'Asia/Kolkata').toISOString()).toBe('2026-06-30T18:30:00.000Z');
  });

  it('counts an item as overdue from the local midnight after its due date', () => {
    expect(isOverdue('2026-03-02', new Date('2026-03-02T22:59:59Z'), 'Europe/Vienna')).toBe(false);
    expect(isOverdue('2026-03-02', new Date('2026-03-02T23:00:00Z'), 'Europe/Vienna')).toBe(true);
  });
});
