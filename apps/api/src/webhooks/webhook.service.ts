import { randomUUID } from 'node:crypto';

import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertLabManager } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import type { Db } from '../common/db';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { assertChannelReader } from './channel-access';
import { newWebhookSecret } from './webhook-signature';
import { type StoredWebhook, WebhookRepository } from './webhook.repository';
import type { CreateWebhook, IssuedWebhookView, UpdateWebhook, WebhookListQuery, WebhookView } from './webhook.schemas';
import { WebhookSecrets } from './webhook-secrets';
import { refusedTarget } from './webhook-targets';

export function toWebhookView(w: StoredWebhook): WebhookView {
  return {
    id: w.id,
    labId: w.labId,
    url: w.url,
    description: w.description,
    eventKinds: w.eventKinds,
    enabled: w.enabled,
    secretRotatedAt: w.secretRotatedAt.toISOString(),
    createdById: w.createdById,
    createdAt: w.createdAt.toISOString(),
    updatedAt: w.updatedAt.toISOString(),
    version: w.version,
  };
}

/** What the audit trail keeps: never the secret, sealed or not. */
const snapshot = (w: StoredWebhook) => ({ url: w.url, description: w.description, eventKinds: w.eventKinds, enabled: w.enabled });

const NOT_FOUND = 'No webhook of this lab with that id.';

/**
 * A lab's webhook endpoints: registered and changed by the lab's managers and
 * administrators, read also by auditors. The signing secret is generated here,
 * returned once (at creation and on rotation) and stored only sealed.
 */
@Injectable()
export class WebhookService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly webhooks: WebhookRepository,
    private readonly secrets: WebhookSecrets,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async create(ctx: RequestContext, labId: string, body: CreateWebhook): Promise<IssuedWebhookView> {
    assertLabManager(ctx.actor, labId, 'lab');
    this.assertTarget(body.url);
    await this.existingLab(this.prisma, labId);
    const box = this.secrets.required();
    const id = randomUUID();
    const secret = newWebhookSecret();
    return this.prisma.$transaction(async (tx) => {
      const created = await this.webhooks.insert(
        tx,
        {
          id,
          labId,
          url: body.url,
          description: body.description,
          eventKinds: body.eventKinds,
          enabled: body.enabled,
          secret: box.seal(secret, id),
          createdById: ctx.actor.id,
        },
        this.clock.now(),
      );
      await this.audit.record(tx, ctx, { action: 'create', entityType: 'webhook', entityId: id, labId, newValues: snapshot(created) });
      return { ...toWebhookView(created), secret };
    });
  }

  async list(ctx: RequestContext, labId: string, query: WebhookListQuery): Promise<Page<WebhookView>> {
    assertChannelReader(ctx.actor, labId, 'lab');
    await this.existingLab(this.prisma, labId);
    const after = query.cursor === undefined ? null : decodeCursor(query.cursor);
    const rows = await this.webhooks.page(
      this.prisma,
      labId,
      query.enabled === undefined ? undefined : query.enabled === 'true',
      query.limit + 1,
      after ? { createdAt: cursorInstant(after.sortValue), id: after.id } : null,
    );
    const page = toPage(rows, query.limit, (w) => encodeCursor(w.createdAt.toISOString(), w.id));
    return { items: page.items.map(toWebhookView), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, labId: string, id: string): Promise<WebhookView> {
    assertChannelReader(ctx.actor, labId, 'webhook');
    return toWebhookView(await this.existing(this.prisma, labId, id));
  }

  async update(ctx: RequestContext, labId: string, id: string, ifMatch: string | undefined, body: UpdateWebhook): Promise<WebhookView> {
    assertLabManager(ctx.actor, labId, 'webhook');
    if (body.url !== undefined) this.assertTarget(body.url);
    const version = expectedVersion(ifMatch);
    return this.prisma.$transaction(async (tx) => {
      const before = await this.existing(tx, labId, id);
      const changes = Object.fromEntries(Object.entries(body).filter(([, v]) => v !== undefined)) as UpdateWebhook;
      const after = await this.webhooks.updateIfVersion(tx, id, version, changes, this.clock.now());
      if (!after) throw staleVersion(before.version);
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: 'webhook',
        entityId: id,
        labId,
        oldValues: snapshot(before),
        newValues: snapshot(after),
      });
      return toWebhookView(after);
    });
  }

  /** A new signing secret, returned once; the old one stops signing at once (pending deliveries are signed with the new one). */
  async rotateSecret(ctx: RequestContext, labId: string, id: string): Promise<IssuedWebhookView> {
    assertLabManager(ctx.actor, labId, 'webhook');
    const box = this.secrets.required();
    const secret = newWebhookSecret();
    return this.prisma.$transaction(async (tx) => {
      await this.webhooks.lock(tx, id);
      const before = await this.existing(tx, labId, id);
      const after = await this.webhooks.updateIfVersion(tx, id, before.version, { secret: box.seal(secret, id) }, this.clock.now());
      if (!after) throw staleVersion(before.version);
      await this.audit.record(tx, ctx, {
        action: 'rotate-secret',
        entityType: 'webhook',
        entityId: id,
        labId,
        oldValues: { secretRotatedAt: before.secretRotatedAt },
        newValues: { secretRotatedAt: after.secretRotatedAt },
      });
      return { ...toWebhookView(after), secret };
    });
  }

  /** Unless the deployment allows them, no loopback, private or reserved address (names are checked when delivered). */
  private assertTarget(url: string): void {
    const reason = this.config.delivery.allowPrivateTargets ? null : refusedTarget(url);
    if (reason) {
      throw new DomainError('validation-failed', 'This webhook URL points at an address the registry does not deliver to.', [
        { field: 'url', reason: `${reason} (WEBHOOK_PRIVATE_TARGETS=allow permits it)` },
      ]);
    }
  }

  private async existingLab(db: Db, labId: string): Promise<void> {
    if (!(await this.webhooks.labExists(db, labId))) throw new DomainError('not-found', 'No lab with that id.');
  }

  private async existing(db: Db, labId: string, id: string): Promise<StoredWebhook> {
    const webhook = await this.webhooks.findInLab(db, labId, id);
    if (!webhook) throw new DomainError('not-found', NOT_FOUND);
    return webhook;
  }
}
