import {
  bearer,
  seedBalance,
  seedBalanceCheck,
  seedCalibrationUsing,
  seedCheckWeight,
  seedCredential,
  seedFactor,
  seedInstrument,
  seedPerson,
  seedVessel,
} from '../support/factories';
import { day, schedulingWorld, type SchedulingWorld } from './support';

interface DueItem {
  subjectKind: string;
  subjectId: string;
  subjectLabel: string;
  personId: string | null;
  dueOn: string;
  dueSoonOn: string;
  state: string;
  daysUntilDue: number;
  basis: string;
  lastDoneAt: string | null;
  intervalDays: number | null;
}

// Every item and current factor has a next due date and a state in its lab's time zone, listed by GET /v1/due.
describe('due dates', () => {
  let w: SchedulingWorld;
  const list = async (query: Record<string, string>, who: Parameters<SchedulingWorld['get']>[1] = 'admin'): Promise<DueItem[]> => {
    const res = await w.get('/v1/due', who, { limit: '200', ...query });
    expect(res.status).toBe(200);
    return res.body.items as DueItem[];
  };
  const one = async (subjectId: string, kind?: string) => {
    const items = await list({ labId: w.cast.lab.id, ...(kind ? { subjectKind: kind } : {}) });
    return items.find((i) => i.subjectId === subjectId);
  };

  beforeAll(async () => {
    w = await schedulingWorld();
  });
  afterAll(() => w.t.close());

  it('makes a never-calibrated vessel due from its registration, and a calibrated one due a year after (no policy)', async () => {
    const lab = w.cast.lab.id;
    const fresh = await seedVessel(w.prisma, lab, { createdAt: new Date('2026-11-20T10:00:00Z') });
    expect(await one(fresh.id)).toMatchObject({ dueOn: '2026-11-20', state: 'overdue', basis: 'registration', lastDoneAt: null });

    const used = await seedVessel(w.prisma, lab);
    const { balance, thermometer } = { balance: await seedBalance(w.prisma, lab), thermometer: await seedInstrument(w.prisma, lab) };
    const performedAt = new Date('2026-03-10T09:00:00Z');
    await seedCalibrationUsing(w.prisma, {
      labId: lab,
      vesselId: used.id,
      performerId: w.cast.people.analyst.id,
      balanceId: balance.id,
      thermometerId: thermometer.id,
      performedAt,
      reviewerId: w.cast.people.manager.id,
    });
    // 2026-03-10 + 365 days; due soon 30 days before (registry defaults without a policy).
    expect(await one(used.id)).toMatchObject({
      dueOn: '2027-03-10',
      dueSoonOn: '2027-02-08',
      state: 'current',
      basis: 'interval',
      intervalDays: 365,
      lastDoneAt: performedAt.toISOString(),
    });
  });

  it('makes a balance due now when its routine check fails, and due after the lab’s window when it passes', async () => {
    const lab = w.cast.lab.id;
    const balance = await seedBalance(w.prisma, lab);
    await seedBalanceCheck(w.prisma, balance, w.cast.people.analyst.id, new Date('2026-11-30T08:00:00Z'), { passed: true });
    // The lab's balanceCheckWindowDays is 1.
    expect(await one(balance.id, 'balance-check')).toMatchObject({
      dueOn: '2026-12-01',
      state: 'due-soon',
      basis: 'interval',
      intervalDays: 1,
    });
    await seedBalanceCheck(w.prisma, balance, w.cast.people.analyst.id, new Date('2026-12-01T06:30:00Z'), { passed: false });
    expect(await one(balance.id, 'balance-check')).toMatchObject({
      dueOn: '2026-12-01',
      state: 'due-soon',
      basis: 'failed-result',
      daysUntilDue: 0,
    });
    w.clock.set(new Date('2026-12-01T23:30:00Z')); // 00:30 on 2 December in Vienna
    expect(await one(balance.id, 'balance-check')).toMatchObject({ state: 'overdue', daysUntilDue: -1 });
    w.clock.set(new Date('2026-12-01T07:00:00Z'));
  });

  it('takes certificate due dates as recorded, and counts days in the lab’s time zone', async () => {
    const lab = w.cast.lab.id;
    const weight = await seedCheckWeight(w.prisma, lab, { certificateDue: day('2026-12-20') });
    const balance = await seedBalance(w.prisma, lab, {
      externalCalibrationDate: day('2026-01-05'),
      externalCalibrationDue: day('2027-01-05'),
    });
    const thermometer = await seedInstrument(w.prisma, lab, { calibrationDate: day('2025-12-10') });
    expect(await one(weight.id)).toMatchObject({
      subjectKind: 'reference-weight',
      dueOn: '2026-12-20',
      state: 'due-soon',
      basis: 'certificate',
      daysUntilDue: 19,
    });
    expect(await one(balance.id, 'balance-calibration')).toMatchObject({ dueOn: '2027-01-05', state: 'current', basis: 'certificate' });
    // No due date recorded: the calibration date plus 365 days.
    expect(await one(thermometer.id)).toMatchObject({ dueOn: '2026-12-10', basis: 'interval', state: 'due-soon' });
    // 23:30 UTC on 20 December is already 21 December in Vienna: the weight is overdue there.
    w.clock.set(new Date('2026-12-20T23:30:00Z'));
    expect(await one(weight.id)).toMatchObject({ state: 'overdue', daysUntilDue: -1 });
    w.clock.set(new Date('2026-12-01T07:00:00Z'));
  });

  it('keeps due dates within the years 0001 to 9999 when recorded dates lie at those ends', async () => {
    const lab = w.cast.lab.id;
    // 9999-12-30 plus the 365-day default interval would be in year 10000; due soon 30 days earlier still is.
    const late = await seedInstrument(w.prisma, lab, { calibrationDate: day('9999-12-30') });
    // Due 0001-01-01 with the 30-day lead would be due soon in year 0, which no calendar date of the API can say.
    const early = await seedCheckWeight(w.prisma, lab, { certificateDue: day('0001-01-01') });
    // Midnight of 0001-01-01 in Vienna (UTC+01:05 local mean time then) is an instant in year 0 UTC.
    const old = await seedBalance(w.prisma, lab, { externalCalibrationDate: day('0001-01-01') });
    expect(await one(late.id)).toMatchObject({ dueOn: '9999-12-31', dueSoonOn: '9999-12-31', state: 'current', basis: 'interval' });
    expect(await one(early.id)).toMatchObject({ dueOn: '0001-01-01', dueSoonOn: '0001-01-01', state: 'overdue', basis: 'certificate' });
    expect(await one(old.id, 'balance-calibration')).toMatchObject({ lastDoneAt: '0001-01-01T00:00:00.000Z', basis: 'interval' });
    // The scheduler announces the overdue weight with that date, and the notice list can show it.
    await w.scheduler.runPass();
    const notices = await w.get('/v1/notices', 'admin', { limit: '200' });
    expect(notices.status).toBe(200);
    expect(notices.body.items).toEqual(expect.arrayContaining([expect.objectContaining({ subjectId: early.id, dueOn: '0001-01-01' })]));
  });

  it('gives each current factor a due date on its last valid day, seen by its holder and the lab’s managers only', async () => {
    const lab = w.cast.lab.id;
    const vessel = await seedVessel(w.prisma, lab);
    const colleague = await seedPerson(w.prisma, { labs: [{ labId: lab, role: 'analyst' }] });
    const own = await seedFactor(w.prisma, {
      labId: lab,
      personId: w.cast.people.analyst.id,
      vesselId: vessel.id,
      validFrom: new Date('2025-12-15T10:00:00Z'),
      validUntil: new Date('2026-12-15T10:00:00Z'),
    });
    const theirs = await seedFactor(w.prisma, {
      labId: lab,
      personId: colleague.id,
      vesselId: vessel.id,
      validFrom: new Date('2026-06-01T10:00:00Z'),
      validUntil: new Date('2027-06-01T10:00:00Z'),
    });
    expect(await one(own.id)).toMatchObject({
      subjectKind: 'factor',
      personId: w.cast.people.analyst.id,
      dueOn: '2026-12-15',
      state: 'due-soon',
      basis: 'factor-validity',
    });
    expect((await one(own.id))?.subjectLabel).toBe(`${vessel.assetTag} · Bench Analyst`);

    const analystSees = (await list({ subjectKind: 'factor' }, 'analyst')).map((i) => i.subjectId);
    expect(analystSees).toContain(own.id);
    expect(analystSees).not.toContain(theirs.id);
    const managerSees = (await list({ subjectKind: 'factor' }, 'manager')).map((i) => i.subjectId);
    expect(managerSees).toEqual(expect.arrayContaining([own.id, theirs.id]));
    expect((await list({ personId: colleague.id })).map((i) => i.subjectId)).toEqual([theirs.id]);
    // Lab B's manager sees nothing of lab A, and lab A by id is not theirs to read.
    expect((await list({}, 'otherManager')).filter((i) => i.subjectId === own.id)).toEqual([]);
    expect((await w.get('/v1/due', 'otherManager', { labId: lab })).status).toBe(404);

    // A superseded factor has no due date any more.
    await w.prisma.factor.update({ where: { id: own.id }, data: { state: 'withdrawn', endedAt: new Date() } });
    expect(await one(own.id)).toBeUndefined();
  });

  it('filters by state, kind and days ahead, ordered by due date, in pages', async () => {
    const lab = w.cast.lab.id;
    const overdue = await list({ labId: lab, state: 'overdue' });
    expect(overdue.length).toBeGreaterThan(0);
    expect(overdue.every((i) => i.state === 'overdue' && i.daysUntilDue < 0)).toBe(true);
    const soon = await list({ labId: lab, state: 'due-soon' });
    expect(soon.every((i) => i.state === 'due-soon')).toBe(true);
    expect(soon.map((i) => i.subjectKind)).toEqual(expect.arrayContaining(['reference-weight', 'instrument']));
    const current = await list({ labId: lab, state: 'current' });
    expect(current.every((i) => i.state === 'current')).toBe(true);
    const all = await list({ labId: lab });
    expect(all.length).toBe(overdue.length + soon.length + current.length);
    expect(all.map((i) => i.dueOn)).toEqual([...all.map((i) => i.dueOn)].sort());

    const within = await list({ labId: lab, withinDays: '10' });
    expect(within.length).toBeGreaterThan(0);
    expect(within.every((i) => i.daysUntilDue <= 10)).toBe(true);
    expect(within.length).toBe(all.filter((i) => i.daysUntilDue <= 10).length);
    expect((await list({ labId: lab, subjectKind: 'vessel' })).every((i) => i.subjectKind === 'vessel')).toBe(true);

    const seen: string[] = [];
    let cursor: string | null = null;
    do {
      const res = await w.get('/v1/due', 'admin', { labId: lab, limit: '2', ...(cursor ? { cursor } : {}) });
      expect(res.status).toBe(200);
      seen.push(...(res.body.items as DueItem[]).map((i) => `${i.subjectKind}:${i.subjectId}`));
      cursor = res.body.nextCursor as string | null;
    } while (cursor);
    expect(seen).toEqual(all.map((i) => `${i.subjectKind}:${i.subjectId}`));
  });

  it('moves local due dates when the lab changes its time zone', async () => {
    const lab = await w.prisma.lab.create({ data: { code: 'TEACH-TZ', name: 'Teaching laboratory', timeZone: 'UTC' } });
    // Registered at 23:30 UTC on 14 December: the 14th in UTC, already the 15th in Vienna.
    const vessel = await seedVessel(w.prisma, lab.id, { createdAt: new Date('2026-12-14T23:30:00Z') });
    const dueOn = async () => (await list({ labId: lab.id })).find((i) => i.subjectId === vessel.id)?.dueOn;
    expect(await dueOn()).toBe('2026-12-14');
    await w.prisma.lab.update({ where: { id: lab.id }, data: { timeZone: 'Europe/Vienna' } });
    expect(await dueOn()).toBe('2026-12-15');
  });

  it('answers a malformed filter with a problem naming it', async () => {
    for (const [query, field] of [
      [{ state: 'late' }, 'state'],
      [{ withinDays: '-1' }, 'withinDays'],
      [{ subjectKind: 'pipette' }, 'subjectKind'],
      [{ cursor: 'bm90LWEtY3Vyc29y' }, 'cursor'],
    ] as const) {
      const res = await w.get('/v1/due', 'admin', query);
      expect(res.status).toBe(400);
      expect(res.body.errors.map((e: { field: string }) => e.field)).toContain(field);
    }
  });

  it('lets a service credential with inventory:read list its labs’ items, never factors', async () => {
    const { key } = await seedCredential(w.prisma, w.cast.people.admin.id, ['inventory:read'], [w.cast.lab.id]);
    const res = await w.t.http.get('/v1/due').set(bearer(key)).query({ limit: '200' });
    expect(res.status).toBe(200);
    expect(res.body.items.length).toBeGreaterThan(0);
    expect(res.body.items.some((i: DueItem) => i.subjectKind === 'factor')).toBe(false);
  });
});
