import { Injectable } from '@nestjs/common';

import type { Db } from '../common/db';

export const DELIVERY_CHANNELS = ['webhook', 'email'] as const;
export type DeliveryChannel = (typeof DELIVERY_CHANNELS)[number];
export const DELIVERY_STATES = ['pending', 'delivered', 'failed'] as const;
export type DeliveryState = (typeof DELIVERY_STATES)[number];

/** A delivery row with the notice it carries (for the log). */
export interface StoredDelivery {
  readonly id: string;
  readonly noticeId: string;
  readonly labId: string;
  readonly channel: DeliveryChannel;
  readonly webhookId: string | null;
  readonly recipientId: string | null;
  readonly target: string;
  readonly state: DeliveryState;
  readonly attempts: number;
  readonly attemptLimit: number;
  readonly nextAttemptAt: Date | null;
  readonly lastAttemptAt: Date | null;
  readonly lastStatusCode: number | null;
  readonly lastError: string | null;
  readonly deliveredAt: Date | null;
  readonly failedAt: Date | null;
  readonly redeliveries: number;
  readonly createdAt: Date;
  readonly eventKind: string;
  readonly subjectLabel: string;
  readonly dueOn: string;
}

/** A delivery claimed for one attempt, with what the senders need. */
export interface ClaimedDelivery extends StoredDelivery {
  readonly labCode: string;
  readonly labName: string;
  readonly subjectKind: string;
  readonly subjectId: string;
  readonly personId: string | null;
  readonly raisedAt: Date;
  readonly detail: unknown;
  readonly webhookUrl: string | null;
  readonly webhookEnabled: boolean | null;
  readonly secretSealed: Uint8Array | null;
  readonly secretKeyRef: string | null;
  readonly recipientName: string | null;
}

export type AttemptOutcome =
  | { readonly kind: 'delivered'; readonly statusCode: number | null }
  | { readonly kind: 'retry'; readonly statusCode: number | null; readonly error: string; readonly nextAttemptAt: Date }
  | { readonly kind: 'failed'; readonly statusCode: number | null; readonly error: string };

export interface DeliveryFilter {
  readonly channel?: DeliveryChannel;
  readonly state?: DeliveryState;
  readonly webhookId?: string;
  readonly noticeId?: string;
}

const COLUMNS = `
  d.id, d.notice_id AS "noticeId", d.lab_id AS "labId", d.channel, d.webhook_id AS "webhookId",
  d.recipient_id AS "recipientId", d.target, d.state, d.attempts, d.attempt_limit AS "attemptLimit",
  d.next_attempt_at AS "nextAttemptAt", d.last_attempt_at AS "lastAttemptAt", d.last_status_code AS "lastStatusCode",
  d.last_error AS "lastError", d.delivered_at AS "deliveredAt", d.failed_at AS "failedAt", d.redeliveries,
  d.created_at AS "createdAt", n.event_kind AS "eventKind", n.subject_label AS "subjectLabel",
  to_char(n.due_on, 'YYYY-MM-DD') AS "dueOn"`;

/** Longest error text kept (the column allows 1000). */
const MAX_ERROR = 1000;
const clip = (s: string) => (s.length > MAX_ERROR ? `${s.slice(0, MAX_ERROR - 1)}…` : s);

@Injectable()
export class DeliveryRepository {
  /**
   * Claims up to `batch` due deliveries for one attempt each: counts the
   * attempt and moves `next_attempt_at` to `leaseUntil`, so a process that dies
   * mid-attempt leaves the row to be retried then. SKIP LOCKED lets several
   * workers claim side by side without waiting for, or taking, each other's rows.
   */
  async claimDue(db: Db, now: Date, leaseUntil: Date, batch: number): Promise<ClaimedDelivery[]> {
    return db.$queryRawUnsafe<ClaimedDelivery[]>(
      `WITH due AS (
         SELECT id FROM notice_deliveries
          WHERE state = 'pending' AND next_attempt_at <= $1::timestamptz
          ORDER BY next_attempt_at, id
          LIMIT $3
          FOR UPDATE SKIP LOCKED
       ), d AS (
         UPDATE notice_deliveries u
            SET attempts = u.attempts + 1, last_attempt_at = $1::timestamptz, next_attempt_at = $2::timestamptz
           FROM due
          WHERE u.id = due.id
          RETURNING u.*
       )
       SELECT ${COLUMNS}, l.code AS "labCode", l.name AS "labName", n.subject_kind AS "subjectKind",
              n.subject_id AS "subjectId", n.person_id AS "personId", n.raised_at AS "raisedAt", n.detail,
              w.url AS "webhookUrl", w.enabled AS "webhookEnabled", w.secret_sealed AS "secretSealed",
              w.secret_key_ref AS "secretKeyRef", p.display_name AS "recipientName"
         FROM d
         JOIN notices n ON n.id = d.notice_id
         JOIN labs l ON l.id = d.lab_id
         LEFT JOIN webhooks w ON w.id = d.webhook_id
         LEFT JOIN people p ON p.id = d.recipient_id
        ORDER BY d.next_attempt_at, d.id`,
      now,
      leaseUntil,
      batch,
    );
  }

  /** Records the attempt's result, if the row is still in that attempt (a lapsed claim taken over by another worker wins). */
  async recordOutcome(db: Db, id: string, attempt: number, outcome: AttemptOutcome, now: Date): Promise<boolean> {
    const error = outcome.kind === 'delivered' ? null : clip(outcome.error);
    const next = outcome.kind === 'retry' ? outcome.nextAttemptAt : null;
    const state = outcome.kind === 'retry' ? 'pending' : outcome.kind;
    const changed = await db.$executeRaw`
      UPDATE notice_deliveries
         SET state = ${state},
             next_attempt_at = ${next}::timestamptz,
             delivered_at = CASE WHEN ${state} = 'delivered' THEN ${now}::timestamptz END,
             failed_at = CASE WHEN ${state} = 'failed' THEN ${now}::timestamptz END,
             last_status_code = ${outcome.statusCode}::integer,
             last_error = ${error}
       WHERE id = ${id}::uuid AND attempts = ${attempt} AND state = 'pending'`;
    return changed === 1;
  }

  async findInLab(db: Db, labId: string, id: string): Promise<StoredDelivery | null> {
    const rows = await db.$queryRawUnsafe<StoredDelivery[]>(
      `SELECT ${COLUMNS} FROM notice_deliveries d JOIN notices n ON n.id = d.notice_id WHERE d.id = $1::uuid AND d.lab_id = $2::uuid`,
      id,
      labId,
    );
    return rows[0] ?? null;
  }

  /** Newest first (creation time, then id), continuing after the cursor's (createdAt, id). */
  async page(db: Db, labId: string, filter: DeliveryFilter, take: number, after: { createdAt: Date; id: string } | null) {
    return db.$queryRawUnsafe<StoredDelivery[]>(
      `SELECT ${COLUMNS}
         FROM notice_deliveries d JOIN notices n ON n.id = d.notice_id
        WHERE d.lab_id = $1::uuid
          AND ($2::text IS NULL OR d.channel = $2::text)
          AND ($3::text IS NULL OR d.state = $3::text)
          AND ($4::uuid IS NULL OR d.webhook_id = $4::uuid)
          AND ($5::uuid IS NULL OR d.notice_id = $5::uuid)
          AND ($6::timestamptz IS NULL OR (d.created_at, d.id) < ($6::timestamptz, $7::uuid))
        ORDER BY d.created_at DESC, d.id DESC
        LIMIT $8`,
      labId,
      filter.channel ?? null,
      filter.state ?? null,
      filter.webhookId ?? null,
      filter.noticeId ?? null,
      after?.createdAt ?? null,
      after?.id ?? null,
      take,
    );
  }

  /** A failed delivery made due now with `extraAttempts` more allowed; false when it is not failed (any more). */
  async redeliver(db: Db, id: string, now: Date, extraAttempts: number): Promise<boolean> {
    const changed = await db.$executeRaw`
      UPDATE notice_deliveries
         SET state = 'pending', next_attempt_at = ${now}::timestamptz, failed_at = NULL,
             attempt_limit = attempts + ${extraAttempts}::integer, redeliveries = redeliveries + 1
       WHERE id = ${id}::uuid AND state = 'failed'`;
    return changed === 1;
  }

  async lock(db: Db, id: string): Promise<void> {
    await db.$queryRaw`SELECT id FROM notice_deliveries WHERE id = ${id}::uuid FOR UPDATE`;
  }
}
