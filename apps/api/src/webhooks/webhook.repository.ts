import { Injectable } from '@nestjs/common';

import type { Db } from '../common/db';
import type { SealedSecret } from './secret-box';
import type { WebhookEventKind } from './webhook.schemas';

/** A webhook as stored; the sealed secret never leaves the webhooks and deliveries modules. */
export interface StoredWebhook {
  readonly id: string;
  readonly labId: string;
  readonly url: string;
  readonly description: string;
  readonly eventKinds: WebhookEventKind[];
  readonly enabled: boolean;
  readonly secretSealed: Uint8Array;
  readonly secretKeyRef: string;
  readonly secretRotatedAt: Date;
  readonly createdById: string;
  readonly createdAt: Date;
  readonly updatedAt: Date;
  readonly version: number;
}

export interface NewWebhook {
  readonly id: string;
  readonly labId: string;
  readonly url: string;
  readonly description: string;
  readonly eventKinds: readonly WebhookEventKind[];
  readonly enabled: boolean;
  readonly secret: SealedSecret;
  readonly createdById: string;
}

export type WebhookChanges = Partial<Pick<StoredWebhook, 'url' | 'description' | 'eventKinds' | 'enabled'>> & { secret?: SealedSecret };

const toStored = (row: {
  id: string;
  labId: string;
  url: string;
  description: string;
  eventKinds: string[];
  enabled: boolean;
  secretSealed: Uint8Array;
  secretKeyRef: string;
  secretRotatedAt: Date;
  createdById: string;
  createdAt: Date;
  updatedAt: Date;
  version: number;
}): StoredWebhook => ({ ...row, eventKinds: row.eventKinds as WebhookEventKind[] });

@Injectable()
export class WebhookRepository {
  async labExists(db: Db, labId: string): Promise<boolean> {
    return (await db.lab.count({ where: { id: labId } })) === 1;
  }

  async insert(db: Db, w: NewWebhook, now: Date): Promise<StoredWebhook> {
    return toStored(
      await db.webhook.create({
        data: {
          id: w.id,
          labId: w.labId,
          url: w.url,
          description: w.description,
          eventKinds: [...w.eventKinds],
          enabled: w.enabled,
          secretSealed: w.secret.sealed,
          secretKeyRef: w.secret.keyRef,
          secretRotatedAt: now,
          createdById: w.createdById,
          createdAt: now,
          updatedAt: now,
        },
      }),
    );
  }

  async findInLab(db: Db, labId: string, id: string): Promise<StoredWebhook | null> {
    const row = await db.webhook.findFirst({ where: { id, labId } });
    return row ? toStored(row) : null;
  }

  /** Newest first, continuing after the cursor's (createdAt, id). */
  async page(
    db: Db,
    labId: string,
    enabled: boolean | undefined,
    take: number,
    after: { createdAt: Date; id: string } | null,
  ): Promise<StoredWebhook[]> {
    const rows = await db.webhook.findMany({
      where: {
        labId,
        ...(enabled === undefined ? {} : { enabled }),
        ...(after ? { OR: [{ createdAt: { lt: after.createdAt } }, { createdAt: after.createdAt, id: { lt: after.id } }] } : {}),
      },
      orderBy: [{ createdAt: 'desc' }, { id: 'desc' }],
      take,
    });
    return rows.map(toStored);
  }

  /** Applies the changes when the version still matches; null when someone else changed it first. */
  async updateIfVersion(db: Db, id: string, version: number, changes: WebhookChanges, now: Date): Promise<StoredWebhook | null> {
    const { secret, eventKinds, ...plain } = changes;
    const updated = await db.webhook.updateMany({
      where: { id, version },
      data: {
        ...plain,
        ...(eventKinds ? { eventKinds: [...eventKinds] } : {}),
        ...(secret ? { secretSealed: secret.sealed, secretKeyRef: secret.keyRef, secretRotatedAt: now } : {}),
        updatedAt: now,
        version: { increment: 1 },
      },
    });
    if (updated.count !== 1) return null;
    return toStored(await db.webhook.findUniqueOrThrow({ where: { id } }));
  }

  /** Serialises changes to one webhook until the transaction ends. */
  async lock(db: Db, id: string): Promise<void> {
    await db.$queryRaw`SELECT id FROM webhooks WHERE id = ${id}::uuid FOR UPDATE`;
  }
}
