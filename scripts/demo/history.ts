import { Writable } from 'node:stream';

import type { Database } from '@registry/data';

import { createApp } from '../../apps/api/src/app.factory';
import { ManualClock } from '../../apps/api/src/common/clock';
import type { AppConfig } from '../../apps/api/src/config/config.schema';
import { createLogger } from '../../apps/api/src/logging';
import { DueScheduler } from '../../apps/api/src/scheduler/due-scheduler';
import { DemoApi } from './api-client';
import { type DemoItems, loadItems } from './items';
import { BALANCE_FAILURE, emailOf, HISTORY_DAYS, MANAGERS, planYear, type PlannedCalibration, USP41_DAYS } from './plan';
import { DemoRandom } from './random';
import { calibrationPoints, runUncertainties, weightReading } from './readings';
import { DEMO_BALANCES, DEMO_INSTRUMENTS, DEMO_WEIGHTS, type DemoLabCode } from './scenario';

const DAY_MS = 86_400_000;
const SEED = 20_260_301;

/** Which check weight each balance's routine checks use, and the lab's limit for a quick check, g. */
const QUICK_CHECKS: Readonly<Record<string, { weight: string; limitG: string }>> = {
  'BAL-01': { weight: 'CW-E2-100', limitG: '0.0005' },
  'BAL-02': { weight: 'CW-E2-050', limitG: '0.00010' },
  'BAL-03': { weight: 'CW-F1-200', limitG: '0.003' },
  'BAL-04': { weight: 'CW-M1-2000', limitG: '0.05' },
};
/** USP <41> on the analytical balances: accuracy weight, repeatability weight, smallest net weight, replicate spread. */
const USP41: Readonly<Record<string, { accuracy: string; repeatability: string; smallestNetG: string; sdG: number }>> = {
  'BAL-01': { accuracy: 'CW-E2-200', repeatability: 'CW-E2-010', smallestNetG: '0.2', sdG: 0.00006 },
  'BAL-02': { accuracy: 'CW-E2-100', repeatability: 'CW-E2-010', smallestNetG: '0.05', sdG: 0.000012 },
};

export interface HistorySummary {
  readonly calibrations: number;
  readonly checks: number;
  readonly requests: number;
}

/**
 * A year of history, written by the service itself: the application is built
 * in-process on a clock the demo moves day by day through the year, and every
 * check, calibration, review and void is a request to its HTTP API, so the
 * traceability rules, results, factors, impact marks, due dates and audit
 * entries are exactly those the service writes. At the end the clock is set to
 * `now` and one scheduler pass raises the notices the due dates call for.
 */
export async function loadHistory(config: AppConfig, database: Database, now: Date): Promise<HistorySummary> {
  const start = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()) - HISTORY_DAYS * DAY_MS);
  const clock = new ManualClock(start);
  const quiet = new Writable({ write: (_c, _e, done) => done() });
  const app = await createApp({ config, database, logger: createLogger(config, quiet), clock });
  await app.init();
  await app.getHttpAdapter().getInstance().ready();
  try {
    const items = await loadItems(database.prisma);
    const api = new DemoApi(app, database.prisma, clock, items.people);
    const year = new DemoYear(api, clock, items, start);
    await year.policies();
    const summary = await year.run(planYear(items.plannable, SEED));
    clock.set(now);
    await app.get(DueScheduler).runPass();
    return { ...summary, requests: api.requestCount };
  } finally {
    await app.close();
  }
}

interface Pending {
  readonly plan: PlannedCalibration;
  readonly id: string;
  etag: string;
}

class DemoYear {
  private readonly rnd = new DemoRandom(SEED + 1);
  private readonly toReview: Pending[] = [];
  private readonly toVoid = new Map<number, Pending[]>();
  private calibrations = 0;
  private checks = 0;

  constructor(
    private readonly api: DemoApi,
    private readonly clock: ManualClock,
    private readonly items: DemoItems,
    private readonly start: Date,
  ) {}

  /** Recalibration policies the labs set at the start of the year (the rest keep the registry's defaults). */
  async policies(): Promise<void> {
    this.at(0, 7);
    await this.api.send('rosa.lindqvist@waterworks.example', 'POST', '/v1/due-policies', 201, {
      labId: this.items.labId('DW-CHEM'),
      subjectKind: 'vessel',
      vesselKind: 'one-mark-pipette',
      accuracyClass: 'AS',
      intervalDays: 180,
      dueSoonDays: 30,
      reason: 'Class AS pipettes used to standardise titrants are recalibrated twice a year (lab decision, demo).',
    });
  }

  async run(plan: readonly PlannedCalibration[]): Promise<{ calibrations: number; checks: number }> {
    const byDay = new Map<number, PlannedCalibration[]>();
    for (const p of plan) {
      const day = workday(this.start, p.day);
      if (!this.usable(p.lab, day)) continue;
      byDay.set(day, [...(byDay.get(day) ?? []), p]);
    }
    const failureDay = workday(this.start, BALANCE_FAILURE.day);
    const usp41 = new Set<number>(USP41_DAYS.map((d) => workday(this.start, d)));
    for (let day = 0; day < HISTORY_DAYS; day += 1) {
      if (isWeekend(this.start, day)) continue;
      const today = byDay.get(day) ?? [];
      await this.morningChecks(day, today, day === failureDay + 1 || day === failureDay);
      if (usp41.has(day)) for (const tag of Object.keys(USP41)) await this.usp41Check(day, tag);
      for (const p of today) await this.calibrate(day, p);
      if (day === failureDay) await this.failingCheck(day);
      for (const pending of this.toVoid.get(day) ?? []) await this.void(day, pending);
      await this.reviews(day);
    }
    return { calibrations: this.calibrations, checks: this.checks };
  }

  /**
   * A quick check of each balance most mornings, always before it is used for a calibration. The
   * balances are checked at the same time by different people, so the requests go out together.
   */
  private async morningChecks(day: number, today: readonly PlannedCalibration[], always: boolean): Promise<void> {
    const checks: (() => Promise<void>)[] = [];
    for (const balance of DEMO_BALANCES) {
      const used = today.some((p) => this.items.balanceFor(p.vesselTag).tag === balance.tag);
      if (!used && !always && this.rnd.next() > 0.55) continue;
      if (!this.weightUsable(balance.lab, QUICK_CHECKS[balance.tag]?.weight ?? '', day)) continue;
      checks.push(this.quickCheck(balance.tag, this.time(day, 6, this.rnd.int(0, 40)), 0));
    }
    this.at(day, 6, 45);
    await Promise.all(checks.map((send) => send()));
  }

  /** The request of a quick check, readings drawn now (so they do not depend on the order requests finish in). */
  private quickCheck(balanceTag: string, performedAt: Date, offsetG: number): () => Promise<void> {
    const b = this.items.balance(balanceTag);
    const q = QUICK_CHECKS[balanceTag];
    if (!q) throw new Error(`no quick check for ${balanceTag}`);
    const w = this.items.weight(q.weight);
    const who = this.analystOf(b.lab);
    const body = {
      kind: 'quick',
      referenceWeightId: w.id,
      readingsG: [weightReading(this.rnd, w.conventionalMassG, b.readabilityG, offsetG)],
      limitG: q.limitG,
      performedAt: performedAt.toISOString(),
      ...(offsetG !== 0 ? { notes: 'Reading off after the pan was knocked during cleaning.' } : {}),
    };
    return async () => {
      await this.api.send(who, 'POST', `/v1/balances/${b.id}/checks`, 201, body);
      this.checks += 1;
    };
  }

  private async usp41Check(day: number, balanceTag: string): Promise<void> {
    const spec = USP41[balanceTag];
    if (!spec) return;
    const b = this.items.balance(balanceTag);
    const accuracy = this.items.weight(spec.accuracy);
    const repeat = this.items.weight(spec.repeatability);
    this.at(day, 7, 15);
    const decimals = b.readabilityG.split('.')[1]?.length ?? 0;
    await this.api.send(this.analystOf(b.lab), 'POST', `/v1/balances/${b.id}/checks`, 201, {
      kind: 'usp41',
      referenceWeightId: accuracy.id,
      repeatability: {
        readingsG: Array.from({ length: 10 }, () => this.rnd.normal(Number(repeat.conventionalMassG), spec.sdG).toFixed(decimals)),
        referenceWeightId: repeat.id,
        smallestNetWeightG: spec.smallestNetG,
      },
      accuracyReadingG: weightReading(this.rnd, accuracy.conventionalMassG, b.readabilityG),
      performedAt: this.clock.now().toISOString(),
    });
    this.checks += 1;
  }

  /** The afternoon check that fails: the balance goes into quarantine and the day's work is marked for review. */
  private async failingCheck(day: number): Promise<void> {
    this.at(day, BALANCE_FAILURE.hour, 30);
    await this.quickCheck(BALANCE_FAILURE.balanceTag, this.clock.now(), BALANCE_FAILURE.offsetG)();
  }

  private async calibrate(day: number, p: PlannedCalibration): Promise<void> {
    const vessel = this.items.vessel(p.vesselTag);
    const balance = this.items.balanceFor(p.vesselTag);
    const performer = emailOf(p.performer);
    this.at(day, p.hour, this.rnd.int(0, 50));
    const waterTemperatureC = this.rnd.between(20.2, 22.4);
    const created = await this.api.send(performer, 'POST', '/v1/calibrations', 201, {
      vesselId: vessel.id,
      balanceId: balance.id,
      thermometerId: this.items.thermometerOf(p.lab).id,
      performedAt: this.clock.now().toISOString(),
      airConditions: {
        temperatureC: (waterTemperatureC + this.rnd.between(-0.4, 0.6)).toFixed(1),
        pressurePa: String(Math.round(this.rnd.between(99_400, 102_300))),
        relativeHumidityPercent: String(this.rnd.int(32, 61)),
      },
      uncertainties: runUncertainties(vessel, balance),
      points: calibrationPoints(this.rnd, vessel, balance, {
        biasOfLimit: p.biasOfLimit,
        replicates: vessel.kind.startsWith('piston') ? 10 : 5,
        waterTemperatureC,
      }),
      ...(p.notes ? { notes: p.notes } : {}),
    });
    this.calibrations += 1;
    const id = String(created.body.id);
    if (p.ending.kind === 'draft') return;
    this.clock.advance(20 * 60_000);
    if (p.ending.kind === 'voided-draft') {
      await this.api.send(performer, 'POST', `/v1/calibrations/${id}/void`, 200, { reason: p.ending.reason }, created.etag);
      return;
    }
    const submitted = await this.api.send(performer, 'POST', `/v1/calibrations/${id}/submit`, 200, {}, created.etag);
    const pending: Pending = { plan: p, id, etag: submitted.etag };
    if (p.ending.kind === 'submitted') return;
    if (p.ending.kind === 'approved-same-day') {
      this.clock.advance(2 * 3_600_000);
      await this.approve(pending);
      return;
    }
    this.toReview.push(pending);
  }

  /** The lab manager reviews, mid-afternoon, what was submitted on earlier days. */
  private async reviews(day: number): Promise<void> {
    const due = this.toReview.filter((r) => workday(this.start, r.plan.day) < day);
    for (const r of due) {
      this.toReview.splice(this.toReview.indexOf(r), 1);
      this.at(day, 14, this.rnd.int(0, 50));
      if (r.plan.ending.kind === 'returned') {
        await this.api.send(
          emailOf(MANAGERS[r.plan.lab]),
          'POST',
          `/v1/calibrations/${r.id}/return`,
          200,
          { note: r.plan.ending.note },
          r.etag,
        );
        continue;
      }
      await this.approve(r);
      const ending = r.plan.ending;
      if (ending.kind === 'voided-after-approval') {
        const voidDay = workday(this.start, r.plan.day + ending.afterDays);
        this.toVoid.set(voidDay, [...(this.toVoid.get(voidDay) ?? []), r]);
      }
    }
  }

  private async approve(r: Pending): Promise<void> {
    const approved = await this.api.send(emailOf(MANAGERS[r.plan.lab]), 'POST', `/v1/calibrations/${r.id}/approve`, 200, {}, r.etag);
    r.etag = approved.etag;
  }

  private async void(day: number, r: Pending): Promise<void> {
    if (r.plan.ending.kind !== 'voided-after-approval') return;
    this.at(day, 13, 10);
    await this.api.send(
      emailOf(MANAGERS[r.plan.lab]),
      'POST',
      `/v1/calibrations/${r.id}/void`,
      200,
      { reason: r.plan.ending.reason },
      r.etag,
    );
  }

  /** A calibration needs the lab's balance and thermometer within their due dates (the TEACH ones lapse before the load). */
  private usable(lab: DemoLabCode, day: number): boolean {
    const daysAgo = HISTORY_DAYS - day;
    const dues = [
      ...DEMO_BALANCES.filter((b) => b.lab === lab).map((b) => b.dueInDays),
      ...DEMO_INSTRUMENTS.filter((i) => i.lab === lab && i.kind === 'thermometer').map((i) => i.dueInDays),
    ];
    return dues.every((due) => -daysAgo < due);
  }

  private weightUsable(lab: DemoLabCode, weightTag: string, day: number): boolean {
    const w = DEMO_WEIGHTS.find((x) => x.lab === lab && x.tag === weightTag);
    return w !== undefined && day - HISTORY_DAYS < w.dueInDays;
  }

  private analystOf(lab: DemoLabCode): string {
    return emailOf(this.rnd.pick(this.items.analysts(lab)));
  }

  private at(day: number, hour: number, minute = 0): void {
    this.clock.set(this.time(day, hour, minute));
  }

  private time(day: number, hour: number, minute: number): Date {
    return new Date(this.start.getTime() + day * DAY_MS + hour * 3_600_000 + minute * 60_000);
  }
}

const isWeekend = (start: Date, day: number) => [0, 6].includes(new Date(start.getTime() + day * DAY_MS).getUTCDay());

/** The day itself, or the next working day (the last day of the history at the latest). */
function workday(start: Date, day: number): number {
  let d = Math.min(day, HISTORY_DAYS - 1);
  while (isWeekend(start, d) && d < HISTORY_DAYS - 1) d += 1;
  while (isWeekend(start, d)) d -= 1;
  return d;
}
