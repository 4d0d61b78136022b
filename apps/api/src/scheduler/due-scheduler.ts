import { randomUUID } from 'node:crypto';

import { Inject, Injectable, Logger, type OnApplicationBootstrap, type OnModuleDestroy } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import type { SystemContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { HttpMetrics } from '../metrics/metrics';
import { localDate } from '../due/lab-calendar';
import { IntervalReviewer } from './interval-reviewer';
import { NoticeRaiser } from './notice-raiser';

/** First key of the two-key advisory locks the scheduler takes per lab (the second is the lab's hash). */
export const SCHEDULER_LOCK_CLASS = 61_004;
const TX = { maxWait: 10_000, timeout: 120_000 } as const;

export interface LabPass {
  readonly labId: string;
  /** False when another instance held the lab's lock: it is doing this lab's work now. */
  readonly claimed: boolean;
  readonly today: string;
  readonly intervalChanges: number;
  readonly raised: number;
}

/**
 * The due-date scheduler. Every period (SCHEDULER_PERIOD_SECONDS) each lab is
 * handled in a transaction of its own, as of the injected clock and in the lab's
 * time zone: adaptive intervals take the results reviewed since the last pass,
 * then the notices the lab's due dates call for today are raised. Several
 * instances may run at once: a lab is claimed with a transaction-level advisory
 * try-lock (an instance that finds it taken skips the lab; the holder does the
 * work), and the notices' unique key makes each notice once per due cycle even
 * without the lock. A pass catches up on whatever it missed: it looks at today's
 * state only, never at the days in between.
 */
@Injectable()
export class DueScheduler implements OnApplicationBootstrap, OnModuleDestroy {
  private readonly logger = new Logger('DueScheduler');
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<LabPass[]> | null = null;

  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    private readonly intervals: IntervalReviewer,
    private readonly raiser: NoticeRaiser,
    private readonly metrics: HttpMetrics,
  ) {}

  onApplicationBootstrap(): void {
    if (!this.config.scheduler.enabled) return;
    this.timer = setInterval(() => void this.tick(), this.config.scheduler.periodMs);
    this.timer.unref();
    setImmediate(() => void this.tick());
  }

  async onModuleDestroy(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    await this.running?.catch(() => undefined);
  }

  /** One pass over every lab now; tests call it directly. A pass already running in this instance is awaited instead. */
  runPass(): Promise<LabPass[]> {
    if (!this.running) {
      this.running = this.pass().finally(() => {
        this.running = null;
      });
    }
    return this.running;
  }

  private async tick(): Promise<void> {
    // A pass still running from the last tick is not waited on (or counted) again.
    if (this.running) return;
    const started = process.hrtime.bigint();
    const seconds = () => Number(process.hrtime.bigint() - started) / 1e9;
    try {
      const passes = await this.runPass();
      const raised = passes.reduce((n, p) => n + p.raised, 0);
      const elapsed = seconds();
      this.metrics.observeSchedulerPass(elapsed, 'ok', raised);
      this.logger.log(`pass over ${passes.length} labs in ${Math.round(elapsed * 1000)} ms: ${raised} notices raised`);
    } catch (error) {
      this.metrics.observeSchedulerPass(seconds(), 'failed', 0);
      this.logger.error(`scheduler pass failed: ${(error as Error).message}`);
    }
  }

  private async pass(): Promise<LabPass[]> {
    const now = this.clock.now();
    const labs = await this.prisma.lab.findMany({
      where: { retiredAt: null },
      select: { id: true, timeZone: true },
      orderBy: { id: 'asc' },
    });
    const ctx: SystemContext = { actor: { kind: 'system' }, requestId: `scheduler-${randomUUID()}` };
    const results: LabPass[] = [];
    const failures: unknown[] = [];
    for (const lab of labs) {
      const today = localDate(now, lab.timeZone);
      try {
        results.push(
          await this.prisma.$transaction(async (tx) => {
            const [lock] = await tx.$queryRaw<{ claimed: boolean }[]>`
              SELECT pg_try_advisory_xact_lock(${SCHEDULER_LOCK_CLASS}::int, hashtext(${lab.id})) AS claimed`;
            if (!lock?.claimed) return { labId: lab.id, claimed: false, today, intervalChanges: 0, raised: 0 };
            const intervalChanges = await this.intervals.review(tx, ctx, lab.id, now);
            const raised = await this.raiser.raise(tx, ctx, lab.id, today, now);
            return { labId: lab.id, claimed: true, today, intervalChanges, raised: raised.length };
          }, TX),
        );
      } catch (error) {
        // One lab's failure (rolled back, retried next pass) does not hold up the others.
        this.logger.error(`scheduler pass for lab ${lab.id} failed: ${(error as Error).message}`);
        failures.push(error);
      }
    }
    if (failures.length > 0) throw new AggregateError(failures, `scheduler pass failed for ${failures.length} of ${labs.length} labs`);
    return results;
  }
}
