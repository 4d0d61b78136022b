import { Inject, Injectable, Logger, type OnApplicationBootstrap, type OnApplicationShutdown } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { Clock } from '../common/clock';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { Mailer } from '../mail/mailer';
import { composeNoticeMail } from '../mail/notice-mail';
import { WebhookSecrets } from '../webhooks/webhook-secrets';
import { type AttemptOutcome, type ClaimedDelivery, DeliveryRepository } from './delivery.repository';
import { retryDelayMs } from './retry-schedule';
import { type SendResult, sendWebhook } from './webhook-sender';

/** Deliveries claimed per pass; a full batch makes the loop go again at once. */
export const BATCH = 25;

export interface PassSummary {
  readonly claimed: number;
  readonly delivered: number;
  readonly retrying: number;
  readonly failed: number;
}

/**
 * Sends due deliveries. Each pass claims a batch (FOR UPDATE SKIP LOCKED, in
 * one statement), attempts each, and records the result: delivered; pending
 * again after an exponential, jittered delay; or failed after the last allowed
 * attempt. Runs inside the service every DELIVERY_WORKER_PERIOD_MS (off when
 * 0, the default in tests, which call `runOnce`). Several instances share the
 * work through the database, never in memory.
 */
@Injectable()
export class DeliveryWorker implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('DeliveryWorker');
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<unknown> | null = null;
  private stopped = false;

  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    private readonly deliveries: DeliveryRepository,
    private readonly secrets: WebhookSecrets,
    private readonly mailer: Mailer,
  ) {}

  onApplicationBootstrap(): void {
    if (this.config.delivery.workerPeriodMs > 0) this.schedule(this.config.delivery.workerPeriodMs);
  }

  async onApplicationShutdown(): Promise<void> {
    this.stopped = true;
    if (this.timer) clearTimeout(this.timer);
    await this.running?.catch(() => undefined);
  }

  /** One pass over the deliveries due now. */
  async runOnce(): Promise<PassSummary> {
    const now = this.clock.now();
    const { timeoutMs } = this.config.delivery;
    // An attempt that has not reported by then is taken to have died with its process.
    const leaseUntil = new Date(now.getTime() + 2 * timeoutMs + 30_000);
    const claimed = await this.deliveries.claimDue(this.prisma, now, leaseUntil, BATCH);
    const outcomes = await Promise.all(claimed.map((d) => this.attempt(d)));
    return {
      claimed: claimed.length,
      delivered: outcomes.filter((o) => o === 'delivered').length,
      retrying: outcomes.filter((o) => o === 'retry').length,
      failed: outcomes.filter((o) => o === 'failed').length,
    };
  }

  private schedule(delayMs: number): void {
    if (this.stopped) return;
    this.timer = setTimeout(() => {
      const pass = this.runOnce().then(
        (summary) => this.schedule(summary.claimed === BATCH ? 0 : this.config.delivery.workerPeriodMs),
        (error: unknown) => {
          this.logger.warn(`delivery pass failed: ${(error as Error).message}`);
          this.schedule(this.config.delivery.workerPeriodMs);
        },
      );
      this.running = pass;
    }, delayMs);
    this.timer.unref();
  }

  private async attempt(d: ClaimedDelivery): Promise<AttemptOutcome['kind']> {
    const result = await this.send(d);
    const now = this.clock.now();
    const outcome: AttemptOutcome = result.ok
      ? { kind: 'delivered', statusCode: result.statusCode }
      : d.attempts >= d.attemptLimit || result.final
        ? { kind: 'failed', statusCode: result.statusCode, error: result.error ?? 'failed' }
        : {
            kind: 'retry',
            statusCode: result.statusCode,
            error: result.error ?? 'failed',
            nextAttemptAt: new Date(
              now.getTime() + retryDelayMs(d.attempts, this.config.delivery.retryBaseMs, this.config.delivery.retryMaxMs, Math.random()),
            ),
          };
    const recorded = await this.deliveries.recordOutcome(this.prisma, d.id, d.attempts, outcome, now);
    if (!recorded) this.logger.warn(`delivery ${d.id}: attempt ${d.attempts} reported after its claim lapsed; its result is not recorded`);
    return outcome.kind;
  }

  private async send(d: ClaimedDelivery): Promise<SendResult> {
    if (d.channel === 'webhook')
      return sendWebhook(d, this.secrets.current(), this.clock.now(), {
        timeoutMs: this.config.delivery.timeoutMs,
        allowPrivateTargets: this.config.delivery.allowPrivateTargets,
      });
    if (!this.mailer.configured) return { ok: false, statusCode: null, error: 'e-mail is not configured (SMTP_URL is unset)' };
    try {
      const content = composeNoticeMail({
        recipientName: d.recipientName ?? d.target,
        labCode: d.labCode,
        labName: d.labName,
        eventKind: d.eventKind,
        subjectKind: d.subjectKind,
        subjectLabel: d.subjectLabel,
        dueOn: d.dueOn,
        noticeId: d.noticeId,
      });
      await this.mailer.send(d.target, content);
      return { ok: true, statusCode: null, error: null };
    } catch (error) {
      const e = error as { responseCode?: number; message?: string; code?: string };
      return {
        ok: false,
        statusCode: null,
        error: `SMTP: ${e.responseCode ? `${e.responseCode} ` : ''}${e.message ?? e.code ?? 'failed'}`,
      };
    }
  }
}
