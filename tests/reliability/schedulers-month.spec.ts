import { ManualClock } from '../../apps/api/src/common/clock';
import { DueScheduler } from '../../apps/api/src/scheduler/due-scheduler';
import { seedWebhook } from '../delivery/delivery-support';
import { seedCast, seedCheckWeight, seedFactor, seedLab, seedPerson, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { anotherInstance, DAY_MS, type Instance } from '../scheduling/support';

/**
 * Three instances of the service, each with its own pool and its own clock, run their
 * scheduler passes at the same time every day of a simulated month against one database,
 * with items falling due all through it, one lab on the other side of the date line and
 * certificates renewed mid-month. Each notice must be raised exactly once per subject,
 * event and due date, on the day the rules call for, and each delivery row written once.
 * `npm run test:faults` runs three months with more items (RELIABILITY_LONG=1).
 */
const LONG = process.env.RELIABILITY_LONG === '1';
const DAYS = LONG ? 92 : 31;
const WEIGHTS_PER_LAB = LONG ? 60 : 24;
/** The default lead time (no policy): an item is due soon from this many days before its due date. */
const LEAD_DAYS = 30;
const START = Date.parse('2026-12-01T07:00:00Z');
/** Mail is configured (nothing is sent: the worker is off in tests), so notices fan out to e-mail as well as webhooks. */
const ENV = { SMTP_URL: 'smtp://127.0.0.1:2525', MAIL_FROM: 'Registry <registry@waterworks.example>' };

const isoDay = (ms: number) => new Date(ms).toISOString().slice(0, 10);
const addDays = (day: string, n: number) => isoDay(Date.parse(`${day}T00:00:00Z`) + n * DAY_MS);
/** The calendar date at an instant in a time zone (Intl: independent of the service's own calendar code). */
const localDay = (at: Date, timeZone: string) =>
  new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(at);

interface Pass {
  readonly at: Date;
  /** Index in the sequence of pass rounds (all instances of one round share it). */
  readonly round: number;
  /** The labs this pass claimed (another instance may have held a lab's lock at that moment: the holder did its work). */
  readonly claimed: Set<string>;
}
interface Cycle {
  readonly dueOn: string;
  /** Rounds during which this due date was the item's (inclusive). */
  readonly fromRound: number;
  readonly toRound: number;
}

describe('three schedulers running for a simulated month on one database', () => {
  let t: TestApp;
  const clocks = [new ManualClock(new Date(START)), new ManualClock(new Date(START)), new ManualClock(new Date(START))];
  let others: Instance[] = [];

  beforeAll(async () => {
    t = await startTestApp(ENV, { clock: clocks[0] });
    others = [await anotherInstance(t, clocks[1]!, ENV), await anotherInstance(t, clocks[2]!, ENV)];
  }, 60_000);
  afterAll(async () => {
    for (const o of others) await o.close();
    await t.close();
  });

  it(
    'raises each notice exactly once, on its day, and writes each delivery once',
    async () => {
      const prisma = t.database.prisma;
      const cast = await seedCast(prisma);
      const auckland = await seedLab(prisma, { name: 'Teaching laboratory', timeZone: 'Pacific/Auckland' });
      const aucklandManager = await seedPerson(prisma, { labs: [{ labId: auckland.id, role: 'manager' }] });
      await seedPerson(prisma, { labs: [{ labId: cast.lab.id, role: 'manager' }] });
      // Webhooks in two labs; the third gets e-mail only.
      await seedWebhook(prisma, cast.lab.id, cast.people.manager.id);
      await seedWebhook(prisma, auckland.id, aucklandManager.id);
      const labs = [
        { id: cast.lab.id, timeZone: cast.lab.timeZone },
        { id: cast.otherLab.id, timeZone: cast.otherLab.timeZone },
        { id: auckland.id, timeZone: auckland.timeZone },
      ];

      // Check weights whose certificates fall due from before the month to after it.
      const span = DAYS + LEAD_DAYS + 20;
      const weights: { id: string; labId: string; timeZone: string; cycles: Cycle[] }[] = [];
      for (const lab of labs) {
        for (let i = 0; i < WEIGHTS_PER_LAB; i++) {
          const dueOn = addDays(isoDay(START), -10 + Math.floor((i * span) / WEIGHTS_PER_LAB));
          const w = await seedCheckWeight(prisma, lab.id, { certificateDue: new Date(`${dueOn}T00:00:00Z`) });
          weights.push({
            id: w.id,
            labId: lab.id,
            timeZone: lab.timeZone,
            cycles: [{ dueOn, fromRound: 0, toRound: Number.MAX_SAFE_INTEGER }],
          });
        }
      }
      // Personal factors expiring during the month, addressed to their holder.
      const factors = [];
      for (let i = 0; i < 4; i++) {
        const vessel = await seedVessel(prisma, cast.lab.id);
        factors.push(
          await seedFactor(prisma, {
            labId: cast.lab.id,
            personId: cast.people.analyst.id,
            vesselId: vessel.id,
            validFrom: new Date(START - 300 * DAY_MS),
            validUntil: new Date(START + (5 + 7 * i) * DAY_MS),
          }),
        );
      }

      const schedulers = [t.app.get(DueScheduler), ...others.map((o) => o.scheduler)];
      const passes: Pass[] = [];
      const renewAt = Math.floor(DAYS / 2);
      for (let day = 0; day < DAYS; day++) {
        if (day === renewAt) {
          // Mid-month, the first lab renews the certificates of the weights already overdue: a new due cycle.
          const round = passes.at(-1)!.round + 1;
          const today = isoDay(START + day * DAY_MS);
          for (const w of weights.filter((x) => x.timeZone === cast.lab.timeZone).slice(0, 6)) {
            const last = w.cycles.at(-1)!;
            if (last.dueOn >= today) continue;
            const dueOn = addDays(today, 10);
            await prisma.referenceWeight.update({ where: { id: w.id }, data: { certificateDue: new Date(`${dueOn}T00:00:00Z`) } });
            w.cycles.splice(-1, 1, { ...last, toRound: round - 1 }, { dueOn, fromRound: round, toRound: Number.MAX_SAFE_INTEGER });
          }
        }
        // Some days each instance passes twice (a restart, a slow timer); every instance at its own moment of the day.
        const repeats = day % 7 === 3 ? 2 : 1;
        for (let r = 0; r < repeats; r++) {
          const round = (passes.at(-1)?.round ?? -1) + 1;
          for (const clock of clocks) clock.set(new Date(START + day * DAY_MS + Math.floor(Math.random() * 6 * 3_600_000)));
          const results = await Promise.all(schedulers.map((s) => s.runPass()));
          results.forEach((labPasses, i) =>
            passes.push({ at: clocks[i]!.now(), round, claimed: new Set(labPasses.filter((p) => p.claimed).map((p) => p.labId)) }),
          );
          // Each lab was handled by at least one instance in the round.
          for (const lab of labs) expect(passes.filter((p) => p.round === round).some((p) => p.claimed.has(lab.id))).toBe(true);
        }
      }

      const notices = await prisma.notice.findMany({ include: { recipients: true } });
      // The unique key (subject, event, due date) held: never two.
      const keys = notices.map((n) => `${n.subjectKind} ${n.subjectId} ${n.eventKind} ${isoDay(n.dueOn.getTime())}`);
      expect(keys.length).toBe(new Set(keys).size);

      // Each weight got exactly the notices its due dates and the days passed call for, each on the first day it applied.
      let expectedWeightNotices = 0;
      for (const w of weights) {
        const got = notices.filter((n) => n.subjectId === w.id);
        const expected: { kind: string; dueOn: string; firstDay: string }[] = [];
        for (const cycle of w.cycles) {
          const days = passes
            .filter((p) => p.round >= cycle.fromRound && p.round <= cycle.toRound && p.claimed.has(w.labId))
            .map((p) => localDay(p.at, w.timeZone))
            .sort();
          const soon = days.find((d) => d >= addDays(cycle.dueOn, -LEAD_DAYS) && d <= cycle.dueOn);
          const over = days.find((d) => d > cycle.dueOn);
          // Only today's state is raised: a cycle first seen overdue has no due-soon notice.
          if (soon) expected.push({ kind: 'due-soon', dueOn: cycle.dueOn, firstDay: soon });
          if (over) expected.push({ kind: 'overdue', dueOn: cycle.dueOn, firstDay: over });
        }
        expectedWeightNotices += expected.length;
        const actual = got.map((n) => ({
          kind: n.eventKind,
          dueOn: isoDay(n.dueOn.getTime()),
          firstDay: localDay(n.raisedAt, w.timeZone),
        }));
        const order = (a: { kind: string; dueOn: string }, b: { kind: string; dueOn: string }) =>
          `${a.dueOn} ${a.kind}`.localeCompare(`${b.dueOn} ${b.kind}`);
        // The day raised: the first day a pass that claimed the lab found the condition true. In Vienna every instance is
        // on the same date; across the date line instances at different moments of one round may not be, so only the kind counts.
        const sameDayExpected = w.timeZone === 'Europe/Vienna';
        expect({ id: w.id, notices: actual.sort(order).map((a) => (sameDayExpected ? a : { ...a, firstDay: undefined })) }).toEqual({
          id: w.id,
          notices: expected.sort(order).map((e) => (sameDayExpected ? e : { ...e, firstDay: undefined })),
        });
      }
      expect(expectedWeightNotices).toBeGreaterThan(weights.length);

      // Each expiring factor: one due-soon notice to its holder, and one overdue once it lapsed.
      for (const f of factors) {
        const got = notices.filter((n) => n.subjectId === f.id);
        expect(got.filter((n) => n.eventKind === 'due-soon').length).toBe(1);
        expect(got.filter((n) => n.eventKind === 'overdue').length).toBe(1);
        expect(got.every((n) => n.recipients.map((r) => r.personId).join() === cast.people.analyst.id)).toBe(true);
      }

      // Deliveries: one per notice and subscribed webhook, one per notice and active recipient by e-mail; none twice.
      const deliveries = await prisma.noticeDelivery.findMany();
      const hooks = await prisma.webhook.findMany();
      let expectedDeliveries = 0;
      for (const n of notices) {
        const mine = deliveries.filter((d) => d.noticeId === n.id);
        const webhooks = hooks.filter((h) => h.labId === n.labId && h.enabled && h.eventKinds.includes(n.eventKind)).map((h) => h.id);
        const recipients = n.recipients.map((r) => r.personId);
        expectedDeliveries += webhooks.length + recipients.length;
        expect({
          notice: n.id,
          webhooks: mine
            .filter((d) => d.channel === 'webhook')
            .map((d) => d.webhookId)
            .sort(),
          emails: mine
            .filter((d) => d.channel === 'email')
            .map((d) => d.recipientId)
            .sort(),
        }).toEqual({ notice: n.id, webhooks: webhooks.sort(), emails: recipients.sort() });
      }
      expect(deliveries.length).toBe(expectedDeliveries);
      console.log(
        `three schedulers, ${DAYS} days: ${passes.length} passes (a lab found claimed by another instance ${passes.reduce((n, p) => n + labs.length - p.claimed.size, 0)} times), ${notices.length} notices (${expectedWeightNotices} for ${weights.length} weights), ${deliveries.length} deliveries`,
      );
    },
    LONG ? 600_000 : 60_000,
  );
});
