import ICAL from 'ical.js';

import { auditAndLogText, seedCheckWeight, seedFactor, seedInstrument, seedVessel } from '../support/factories';
import { day, schedulingWorld, type SchedulingWorld } from './support';

// A lab's due dates as an iCalendar feed behind a revocable token, read back with a parser from npm.
describe('calendar feed', () => {
  let w: SchedulingWorld;
  let created: { id: string; token: string; path: string };
  const feed = (token: string) => w.t.http.get('/v1/calendar-feed.ics').query({ token });

  beforeAll(async () => {
    w = await schedulingWorld();
    await seedCheckWeight(w.prisma, w.cast.lab.id, { assetTag: 'CW-E2-100G-01', certificateDue: day('2026-12-20') });
    await seedInstrument(w.prisma, w.cast.lab.id, { assetTag: 'TH-DW-07', calibrationDue: day('2027-04-02') });
    await seedVessel(w.prisma, w.cast.lab.id, { assetTag: 'PIP-25-014', createdAt: new Date('2026-11-03T10:00:00Z') });
    await seedCheckWeight(w.prisma, w.cast.otherLab.id, { assetTag: 'CW-WW-01', certificateDue: day('2026-12-21') });
    const res = await w.post(`/v1/labs/${w.cast.lab.id}/calendar-feeds`, 'manager', { name: 'DW-CHEM shared calendar' });
    expect(res.status).toBe(201);
    created = res.body;
  });
  afterAll(() => w.t.close());

  it('shows the token once and stores only its hash', async () => {
    expect(created.token).toMatch(/^rcal_[A-Za-z0-9_-]{43}$/);
    expect(created.path).toBe(`/v1/calendar-feed.ics?token=${created.token}`);
    const listed = await w.get(`/v1/labs/${w.cast.lab.id}/calendar-feeds`, 'auditor');
    expect(listed.status).toBe(200);
    expect(JSON.stringify(listed.body)).not.toContain(created.token);
    const stored = await w.prisma.calendarFeed.findUniqueOrThrow({ where: { id: created.id } });
    expect(Buffer.from(stored.tokenHash).toString('hex')).not.toContain(Buffer.from(created.token).toString('hex'));
    expect(await auditAndLogText(w.prisma, w.t.logs)).not.toContain(created.token.slice(5));
  });

  it('serves valid iCalendar with one all-day event per due subject of the lab', async () => {
    const res = await feed(created.token);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/calendar/);
    const text = res.text;
    expect(text.split('\r\n').every((line) => Buffer.byteLength(line, 'utf8') <= 75)).toBe(true);
    expect(text.replace(/\r\n/g, '')).not.toMatch(/[\r\n]/);

    const calendar = new ICAL.Component(ICAL.parse(text));
    const events = calendar.getAllSubcomponents('vevent').map((c) => new ICAL.Event(c));
    const byLabel = new Map(events.map((e) => [e.summary.split(':')[0], e]));
    expect([...byLabel.keys()].sort()).toEqual(['CW-E2-100G-01', 'PIP-25-014', 'TH-DW-07']);
    const weight = byLabel.get('CW-E2-100G-01') as ICAL.Event;
    expect(weight.startDate.isDate).toBe(true);
    expect(weight.startDate.toString()).toBe('2026-12-20');
    expect(weight.endDate.toString()).toBe('2026-12-21');
    expect(weight.summary).toBe('CW-E2-100G-01: reference weight certificate due');
    expect(weight.description).toContain('due-soon as of 2026-12-01');
    expect(byLabel.get('PIP-25-014')?.startDate.toString()).toBe('2026-11-03');
    for (const e of events) expect(e.component.getFirstPropertyValue('dtstamp')?.toString()).toBe('2026-12-01T07:00:00Z');

    // The same subject and cycle keep their UID from one fetch to the next.
    w.clock.advance(3_600_000);
    const again = new ICAL.Component(ICAL.parse((await feed(created.token)).text));
    expect(
      again
        .getAllSubcomponents('vevent')
        .map((c) => new ICAL.Event(c).uid)
        .sort(),
    ).toEqual(events.map((e) => e.uid).sort());
  });

  it('answers 404 for an unknown or revoked token, and only managers and administrators create or revoke', async () => {
    expect((await feed('rcal_' + 'A'.repeat(43))).status).toBe(404);
    expect((await feed('not-a-token')).status).toBe(404);
    expect((await w.post(`/v1/labs/${w.cast.lab.id}/calendar-feeds`, 'analyst', { name: 'Mine' })).status).toBe(403);
    expect((await w.post(`/v1/labs/${w.cast.lab.id}/calendar-feeds/${created.id}/revoke`, 'otherManager')).status).toBe(404);
    const revoked = await w.post(`/v1/labs/${w.cast.lab.id}/calendar-feeds/${created.id}/revoke`, 'manager');
    expect(revoked.status).toBe(200);
    expect(revoked.body.revokedById).toBe(w.cast.people.manager.id);
    const gone = await feed(created.token);
    expect(gone.status).toBe(404);
    expect(gone.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect((await w.post(`/v1/labs/${w.cast.lab.id}/calendar-feeds/${created.id}/revoke`, 'admin')).status).toBe(409);
    await expect(w.prisma.calendarFeed.update({ where: { id: created.id }, data: { revokedAt: null, revokedById: null } })).rejects.toThrow(
      /revoked, once/,
    );
  });

  it('leaves people’s names out of factor events unless the feed was made to show them', async () => {
    const lab = w.cast.lab.id;
    const vessel = await seedVessel(w.prisma, lab, { assetTag: 'PIP-10-031' });
    await seedFactor(w.prisma, { labId: lab, personId: w.cast.people.analyst.id, vesselId: vessel.id });
    const holder = (await w.prisma.person.findUniqueOrThrow({ where: { id: w.cast.people.analyst.id } })).displayName;
    const plain = await w.post(`/v1/labs/${lab}/calendar-feeds`, 'manager', { name: 'Corridor screen' });
    const named = await w.post(`/v1/labs/${lab}/calendar-feeds`, 'manager', { name: 'Managers’ calendar', showPeople: true });
    expect([plain.status, plain.body.showPeople, named.status, named.body.showPeople]).toEqual([201, false, 201, true]);
    expect((await w.post(`/v1/labs/${lab}/calendar-feeds`, 'manager', { name: 'X', showPeople: 'yes' })).body.errors).toEqual([
      { field: 'showPeople', reason: 'must be true or false' },
    ]);
    const factorEvent = async (token: string) => {
      const text = (await feed(token)).text;
      const events = new ICAL.Component(ICAL.parse(text)).getAllSubcomponents('vevent').map((c) => new ICAL.Event(c));
      const found = events.filter((e) => e.component.getFirstPropertyValue('categories') === 'factor');
      expect(found).toHaveLength(1);
      return { text, event: found[0] as ICAL.Event };
    };
    const withoutNames = await factorEvent(plain.body.token);
    expect(withoutNames.event.summary).toBe('PIP-10-031 (a person’s factor): personal factor renewal due');
    expect(withoutNames.text).not.toContain(holder);
    const withNames = await factorEvent(named.body.token);
    expect(withNames.event.summary).toBe(`PIP-10-031 · ${holder}: personal factor renewal due`);
    const entry = await w.prisma.auditEntry.findFirstOrThrow({ where: { entityType: 'calendar-feed', entityId: named.body.id } });
    expect(entry.newValues).toMatchObject({ showPeople: true });
  });
});
