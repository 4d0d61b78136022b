import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertLabManager } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { assertChannelReader } from '../webhooks/channel-access';
import { DeliveryRepository, type StoredDelivery } from './delivery.repository';
import type { DeliveryListQuery, DeliveryView } from './delivery.schemas';

const iso = (d: Date | null) => (d === null ? null : new Date(d).toISOString());

export function toDeliveryView(d: StoredDelivery): DeliveryView {
  return {
    id: d.id,
    noticeId: d.noticeId,
    labId: d.labId,
    eventKind: d.eventKind,
    subjectLabel: d.subjectLabel,
    dueOn: d.dueOn,
    channel: d.channel,
    webhookId: d.webhookId,
    recipientId: d.recipientId,
    target: d.target,
    state: d.state,
    attempts: d.attempts,
    attemptLimit: d.attemptLimit,
    nextAttemptAt: iso(d.nextAttemptAt),
    lastAttemptAt: iso(d.lastAttemptAt),
    lastStatusCode: d.lastStatusCode,
    lastError: d.lastError,
    deliveredAt: iso(d.deliveredAt),
    failedAt: iso(d.failedAt),
    redeliveries: d.redeliveries,
    createdAt: new Date(d.createdAt).toISOString(),
  };
}

/** The delivery log of a lab's notices, and redelivery by hand of what failed. */
@Injectable()
export class DeliveryService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly deliveries: DeliveryRepository,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async list(ctx: RequestContext, labId: string, query: DeliveryListQuery): Promise<Page<DeliveryView>> {
    assertChannelReader(ctx.actor, labId, 'lab');
    if ((await this.prisma.lab.count({ where: { id: labId } })) === 0) throw new DomainError('not-found', 'No lab with that id.');
    const after = query.cursor === undefined ? null : decodeCursor(query.cursor);
    const rows = await this.deliveries.page(
      this.prisma,
      labId,
      { channel: query.channel, state: query.state, webhookId: query.webhookId, noticeId: query.noticeId },
      query.limit + 1,
      after ? { createdAt: cursorInstant(after.sortValue), id: after.id } : null,
    );
    const page = toPage(rows, query.limit, (d) => encodeCursor(new Date(d.createdAt).toISOString(), d.id));
    return { items: page.items.map(toDeliveryView), nextCursor: page.nextCursor };
  }

  /**
   * Makes a failed delivery due now, with a fresh round of attempts
   * (DELIVERY_MAX_ATTEMPTS more); the worker sends it on its next pass. Audited.
   */
  async redeliver(ctx: RequestContext, labId: string, id: string): Promise<DeliveryView> {
    assertLabManager(ctx.actor, labId, 'delivery');
    const now = this.clock.now();
    return this.prisma.$transaction(async (tx) => {
      await this.deliveries.lock(tx, id);
      const before = await this.deliveries.findInLab(tx, labId, id);
      if (!before) throw new DomainError('not-found', 'No delivery of this lab with that id.');
      if (!(await this.deliveries.redeliver(tx, id, now, this.config.delivery.maxAttempts))) {
        throw new DomainError('invalid-state', `Only a failed delivery can be redelivered; this one is ${before.state}.`, undefined, {
          state: before.state,
        });
      }
      const after = (await this.deliveries.findInLab(tx, labId, id)) ?? before;
      await this.audit.record(tx, ctx, {
        action: 'redeliver',
        entityType: 'notice-delivery',
        entityId: id,
        labId,
        oldValues: { state: before.state, attempts: before.attempts, attemptLimit: before.attemptLimit, lastError: before.lastError },
        newValues: { state: after.state, attemptLimit: after.attemptLimit, nextAttemptAt: after.nextAttemptAt },
      });
      return toDeliveryView(after);
    });
  }
}
