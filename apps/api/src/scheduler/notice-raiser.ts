import { Injectable } from '@nestjs/common';

import { AuditWriter } from '../audit/audit-writer';
import type { SystemContext } from '../auth/actor';
import type { Db } from '../common/db';
import { isoDay } from '../due/lab-calendar';
import { NoticeFanout, type RaisedNotice } from '../notices/notice-fanout';

type RaisedRow = Omit<RaisedNotice, 'dueOn' | 'recipientIds'> & { dueOn: Date };

/**
 * Raises the notices a lab's due dates call for on `today` (YYYY-MM-DD, the
 * lab's zone): `overdue` for subjects past their due date, `due-soon` for those
 * inside their lead time. Only the state a subject is in today is raised, so
 * after downtime an item found overdue gets its overdue notice and no stale
 * due-soon one. The unique key (subject, event, due date) makes a notice once
 * per due cycle whatever runs concurrently: ON CONFLICT DO NOTHING, and
 * RETURNING gives exactly the ones this transaction created, which get their
 * recipients and go to the fan-out in the same transaction.
 */
@Injectable()
export class NoticeRaiser {
  constructor(
    private readonly audit: AuditWriter,
    private readonly fanout: NoticeFanout,
  ) {}

  async raise(tx: Db, ctx: SystemContext, labId: string, today: string, now: Date): Promise<RaisedNotice[]> {
    const rows = await tx.$queryRaw<RaisedRow[]>`
      INSERT INTO notices (lab_id, event_kind, subject_kind, subject_id, subject_label, person_id, due_on, raised_at, detail)
      SELECT d.lab_id, CASE WHEN d.due_on < ${today}::date THEN 'overdue' ELSE 'due-soon' END, d.subject_kind, d.subject_id,
             d.subject_label, d.person_id, d.due_on, ${now},
             jsonb_build_object('dueSoonOn', to_char(d.due_soon_on, 'YYYY-MM-DD'), 'basis', d.basis, 'intervalDays', d.interval_days,
                                'lastDoneAt', d.last_done_at)
      FROM due_dates d
      WHERE d.lab_id = ${labId}::uuid AND d.due_soon_on <= ${today}::date
      ORDER BY d.due_on, d.subject_kind, d.subject_id
      ON CONFLICT (subject_kind, subject_id, event_kind, due_on) DO NOTHING
      RETURNING id, lab_id AS "labId", event_kind AS "eventKind", subject_kind AS "subjectKind", subject_id AS "subjectId",
                subject_label AS "subjectLabel", person_id AS "personId", due_on AS "dueOn", raised_at AS "raisedAt", detail`;
    if (rows.length === 0) return [];
    const ids = rows.map((r) => r.id);
    // Items: the lab's active managers; a factor: its holder.
    const recipients = await tx.$queryRaw<{ noticeId: string; personId: string }[]>`
      INSERT INTO notice_recipients (notice_id, person_id)
      SELECT n.id, r.person_id FROM notices n
      CROSS JOIN LATERAL (
        SELECT n.person_id AS person_id WHERE n.subject_kind = 'factor'
        UNION
        SELECT m.person_id FROM lab_memberships m JOIN people p ON p.id = m.person_id
        WHERE n.subject_kind <> 'factor' AND m.lab_id = n.lab_id AND m.lab_role = 'manager' AND p.status = 'active') r
      WHERE n.id = ANY(${ids}::uuid[])
      RETURNING notice_id AS "noticeId", person_id AS "personId"`;
    const recipientsOf = new Map<string, string[]>();
    for (const x of recipients) recipientsOf.set(x.noticeId, [...(recipientsOf.get(x.noticeId) ?? []), x.personId]);
    const raised: RaisedNotice[] = rows.map((r) => ({ ...r, dueOn: isoDay(r.dueOn), recipientIds: recipientsOf.get(r.id) ?? [] }));
    await this.audit.record(tx, ctx, {
      action: 'raise-notices',
      entityType: 'lab',
      entityId: labId,
      labId,
      newValues: {
        today,
        dueSoon: raised.filter((n) => n.eventKind === 'due-soon').length,
        overdue: raised.filter((n) => n.eventKind === 'overdue').length,
        noticeIds: raised.length <= 100 ? raised.map((n) => n.id) : undefined,
      },
    });
    await this.fanout.onRaised(tx, raised);
    return raised;
  }
}
