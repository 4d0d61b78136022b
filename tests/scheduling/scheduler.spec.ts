import { Client } from 'pg';

import { APP_CONFIG, type AppConfig } from '../../apps/api/src/config/config.schema';
import { NoticeFanout, type RaisedNotice } from '../../apps/api/src/notices/notice-fanout';
import { SCHEDULER_LOCK_CLASS } from '../../apps/api/src/scheduler/due-scheduler';
import { seedCheckWeight, seedFactor, seedPerson, seedVessel } from '../support/factories';
import { anotherInstance, DAY_MS, day, noticesOf, schedulingWorld, type SchedulingWorld } from './support';

// The scheduler raises one notice per subject, event and due cycle, as the clock moves, after downtime,
// and with several instances running passes at the same moment.
describe('the due-date scheduler', () => {
  let w: SchedulingWorld;
  beforeAll(async () => {
    w = await schedulingWorld();
  });
  afterAll(() => w.t.close());
  beforeEach(() => w.clock.set(new Date('2026-12-01T07:00:00Z')));

  it('raises due-soon when an item enters its lead time and overdue the day after its due date, each once', async () => {
    const weight = await seedCheckWeight(w.prisma, w.cast.lab.id, { certificateDue: day('2027-01-10') });
    await w.scheduler.runPass();
    expect(await noticesOf(w.prisma, weight.id)).toEqual([]);

    // The lead time is 30 days (no policy): due soon from 11 December.
    w.clock.set(new Date('2026-12-10T22:00:00Z')); // 23:00 on 10 December in Vienna: not yet
    await w.scheduler.runPass();
    expect(await noticesOf(w.prisma, weight.id)).toEqual([]);
    w.clock.set(new Date('2026-12-10T23:30:00Z')); // 00:30 on 11 December in Vienna
    await w.scheduler.runPass();
    await w.scheduler.runPass();
    w.clock.advance(3 * DAY_MS);
    await w.scheduler.runPass();
    let notices = await noticesOf(w.prisma, weight.id);
    expect(notices.map((n) => [n.eventKind, n.dueOn.toISOString().slice(0, 10)])).toEqual([['due-soon', '2027-01-10']]);
    expect(notices[0]?.recipients.map((r) => r.personId)).toEqual([w.cast.people.manager.id]);

    w.clock.set(new Date('2027-01-10T22:59:00Z')); // 23:59 on the due date in Vienna: still due, not overdue
    await w.scheduler.runPass();
    expect((await noticesOf(w.prisma, weight.id)).length).toBe(1);
    w.clock.set(new Date('2027-01-10T23:00:00Z')); // midnight in Vienna
    await w.scheduler.runPass();
    await w.scheduler.runPass();
    notices = await noticesOf(w.prisma, weight.id);
    expect(notices.map((n) => n.eventKind)).toEqual(['due-soon', 'overdue']);
    expect(notices[1]?.raisedAt.toISOString()).toBe('2027-01-10T23:00:00.000Z');

    // A new certificate starts a new due cycle with notices of its own.
    await w.prisma.referenceWeight.update({ where: { id: weight.id }, data: { certificateDue: day('2027-02-01') } });
    await w.scheduler.runPass();
    notices = await noticesOf(w.prisma, weight.id);
    expect(notices.map((n) => `${n.eventKind} ${n.dueOn.toISOString().slice(0, 10)}`)).toEqual([
      'due-soon 2027-01-10',
      'overdue 2027-01-10',
      'due-soon 2027-02-01',
    ]);
  });

  it('addresses an expiring factor to its holder', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const factor = await seedFactor(w.prisma, {
      labId: w.cast.lab.id,
      personId: w.cast.people.analyst.id,
      vesselId: vessel.id,
      validFrom: new Date('2025-12-20T09:00:00Z'),
      validUntil: new Date('2026-12-20T09:00:00Z'),
    });
    await w.scheduler.runPass();
    const [notice, ...rest] = await noticesOf(w.prisma, factor.id);
    expect(rest).toEqual([]);
    expect(notice).toMatchObject({ eventKind: 'due-soon', subjectKind: 'factor', personId: w.cast.people.analyst.id });
    expect(notice?.recipients.map((r) => r.personId)).toEqual([w.cast.people.analyst.id]);
  });

  it('catches up after downtime with the overdue notice only, not a stale due-soon one', async () => {
    const weight = await seedCheckWeight(w.prisma, w.cast.lab.id, { certificateDue: day('2026-12-15') });
    // Never looked at while it went through "due soon"; the next pass is after its due date.
    w.clock.set(new Date('2027-02-01T07:00:00Z'));
    const passes = await w.scheduler.runPass();
    expect(passes.find((p) => p.labId === w.cast.lab.id)).toMatchObject({ claimed: true, today: '2027-02-01' });
    expect((await noticesOf(w.prisma, weight.id)).map((n) => n.eventKind)).toEqual(['overdue']);
    await w.scheduler.runPass();
    expect((await noticesOf(w.prisma, weight.id)).length).toBe(1);
  });

  it('raises each notice once with two instances passing at the same moment, and fans out exactly the new ones', async () => {
    const lab = w.cast.lab.id;
    const extraManager = await seedPerson(w.prisma, { labs: [{ labId: lab, role: 'manager' }] });
    const items = await Promise.all(
      Array.from({ length: 40 }, (_, i) => seedCheckWeight(w.prisma, lab, { certificateDue: day(i % 2 ? '2027-03-05' : '2027-03-20') })),
    );
    const second = await anotherInstance(w.t, w.clock);
    try {
      const fannedOut: RaisedNotice[] = [];
      for (const app of [w.t.app, second.app]) {
        const fanout = app.get(NoticeFanout);
        jest.spyOn(fanout, 'onRaised').mockImplementation(async (_tx, notices) => void fannedOut.push(...notices));
      }
      // 2027-03-10: half the weights are overdue, half due soon.
      w.clock.set(new Date('2027-03-10T07:00:00Z'));
      const before = await w.prisma.notice.count();
      const [a, b] = await Promise.all([w.scheduler.runPass(), second.scheduler.runPass(), w.scheduler.runPass()]);
      const claimedA = a?.find((p) => p.labId === lab);
      const claimedB = b?.find((p) => p.labId === lab);
      // One instance did the lab's work while the other found it claimed, or came after and found nothing new.
      expect((claimedA?.raised ?? 0) + (claimedB?.raised ?? 0)).toBe(fannedOut.length);
      const ids = new Set(items.map((i) => i.id));
      const raised = await w.prisma.notice.findMany({ where: { subjectId: { in: [...ids] } }, include: { recipients: true } });
      expect(raised.length).toBe(40);
      expect(new Set(raised.map((n) => `${n.subjectId} ${n.eventKind}`)).size).toBe(40);
      expect(raised.filter((n) => n.eventKind === 'overdue').length).toBe(20);
      expect(raised.every((n) => n.recipients.length === 2)).toBe(true);
      expect(new Set(raised[0]?.recipients.map((r) => r.personId))).toEqual(new Set([w.cast.people.manager.id, extraManager.id]));
      // The fan-out saw every new notice exactly once, with its recipients.
      expect(fannedOut.length).toBe((await w.prisma.notice.count()) - before);
      expect(new Set(fannedOut.map((n) => n.id)).size).toBe(fannedOut.length);
      expect(fannedOut.filter((n) => ids.has(n.subjectId)).every((n) => n.recipientIds.length === 2)).toBe(true);

      // Again, many times over, from both: nothing new.
      await Promise.all([w.scheduler.runPass(), second.scheduler.runPass(), second.scheduler.runPass()]);
      expect(await w.prisma.notice.count({ where: { subjectId: { in: [...ids] } } })).toBe(40);
    } finally {
      jest.restoreAllMocks();
      await second.close();
    }
  });

  it('skips a lab another instance has claimed, and does its work on the next pass', async () => {
    const weight = await seedCheckWeight(w.prisma, w.cast.lab.id, { certificateDue: day('2026-11-25') });
    const other = new Client({ connectionString: w.t.testDatabase.url });
    await other.connect();
    try {
      // Another instance in the middle of this lab's pass holds its lock.
      await other.query('BEGIN');
      await other.query('SELECT pg_advisory_xact_lock($1::int, hashtext($2))', [SCHEDULER_LOCK_CLASS, w.cast.lab.id]);
      const passes = await w.scheduler.runPass();
      expect(passes.find((p) => p.labId === w.cast.lab.id)).toMatchObject({ claimed: false, raised: 0 });
      expect(passes.find((p) => p.labId === w.cast.otherLab.id)).toMatchObject({ claimed: true });
      expect(await noticesOf(w.prisma, weight.id)).toEqual([]);
      await other.query('COMMIT');
    } finally {
      await other.end();
    }
    const after = await w.scheduler.runPass();
    expect(after.find((p) => p.labId === w.cast.lab.id)).toMatchObject({ claimed: true });
    expect((await noticesOf(w.prisma, weight.id)).map((n) => n.eventKind)).toEqual(['overdue']);
  });

  it('is refused by the database when asked to raise a notice twice, or to change one', async () => {
    const weight = await seedCheckWeight(w.prisma, w.cast.lab.id, { certificateDue: day('2026-11-01') });
    await w.scheduler.runPass();
    const [notice] = await noticesOf(w.prisma, weight.id);
    expect(notice).toBeDefined();
    const { id: _id, recipients: _r, acknowledgedAt: _a, acknowledgedById: _b, ...same } = notice!;
    await expect(w.prisma.notice.create({ data: { ...same, detail: {} } })).rejects.toThrow();
    await expect(w.prisma.notice.update({ where: { id: notice!.id }, data: { dueOn: day('2026-11-02') } })).rejects.toThrow(
      /only be acknowledged/,
    );
  });

  it('stays off in tests unless turned on, and runs on its own period when it is', async () => {
    expect(w.t.app.get<AppConfig>(APP_CONFIG).scheduler).toEqual({ enabled: false, periodMs: 300_000 });
    const { startTestApp } = await import('../support/test-app');
    const { seedCast } = await import('../support/factories');
    const t2 = await startTestApp({ SCHEDULER_ENABLED: 'true', SCHEDULER_PERIOD_SECONDS: '5' });
    try {
      const cast = await seedCast(t2.database.prisma);
      const weight = await seedCheckWeight(t2.database.prisma, cast.lab.id, { certificateDue: day('2020-01-01') });
      const deadline = Date.now() + 15_000;
      let count = 0;
      while (Date.now() < deadline && count === 0) {
        await new Promise((r) => setTimeout(r, 250));
        count = await t2.database.prisma.notice.count({ where: { subjectId: weight.id } });
      }
      expect(count).toBe(1);
    } finally {
      await t2.close();
    }
  }, 30_000);
});
