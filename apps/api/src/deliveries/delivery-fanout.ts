import { Inject, Injectable } from '@nestjs/common';

import { Clock } from '../common/clock';
import type { Db } from '../common/db';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { NoticeFanout, type RaisedNotice } from '../notices/notice-fanout';

/**
 * Turns newly raised notices into delivery rows, in the scheduler's
 * transaction: one per enabled webhook of the notice's lab subscribed to its
 * event kind, and one e-mail per recipient who is active (when SMTP is
 * configured). Call it after the notices and their recipients are inserted.
 * The unique indexes make a second call for the same notices write nothing.
 * Needs only global providers, so any module can use it as its NoticeFanout.
 */
@Injectable()
export class DeliveryFanout extends NoticeFanout {
  constructor(
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {
    super();
  }

  async onRaised(tx: Db, notices: readonly RaisedNotice[]): Promise<void> {
    if (notices.length === 0) return;
    const now = this.clock.now();
    const limit = this.config.delivery.maxAttempts;
    const noticeIds = notices.map((n) => n.id);
    await tx.$executeRaw`
      INSERT INTO notice_deliveries (notice_id, lab_id, channel, webhook_id, target, attempt_limit, next_attempt_at, created_at)
      SELECT n.id, n.lab_id, 'webhook', w.id, w.url, ${limit}, ${now}::timestamptz, ${now}::timestamptz
        FROM notices n
        JOIN webhooks w ON w.lab_id = n.lab_id AND w.enabled AND n.event_kind = ANY (w.event_kinds)
       WHERE n.id = ANY (${noticeIds}::uuid[])
       ORDER BY n.id, w.id
      ON CONFLICT DO NOTHING`;
    if (this.config.delivery.smtp === null) return;
    const pairs = notices.flatMap((n) => n.recipientIds.map((personId) => [n.id, personId] as const));
    if (pairs.length === 0) return;
    await tx.$executeRaw`
      INSERT INTO notice_deliveries (notice_id, lab_id, channel, recipient_id, target, attempt_limit, next_attempt_at, created_at)
      SELECT n.id, n.lab_id, 'email', p.id, p.email, ${limit}, ${now}::timestamptz, ${now}::timestamptz
        FROM unnest(${pairs.map((p) => p[0])}::uuid[], ${pairs.map((p) => p[1])}::uuid[]) AS r (notice_id, person_id)
        JOIN notices n ON n.id = r.notice_id
        JOIN people p ON p.id = r.person_id AND p.status = 'active'
       ORDER BY n.id, p.id
      ON CONFLICT DO NOTHING`;
  }
}
