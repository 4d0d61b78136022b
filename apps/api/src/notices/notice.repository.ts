import { Injectable } from '@nestjs/common';
import { Prisma } from '@registry/data';

import type { Db } from '../common/db';
import type { NoticeEventKind, NoticeSubjectKind } from './notice-fanout';
import type { NoticeListQuery } from './notice.schemas';

export interface NoticeRow {
  readonly id: string;
  readonly labId: string;
  readonly eventKind: NoticeEventKind;
  readonly subjectKind: NoticeSubjectKind;
  readonly subjectId: string;
  readonly subjectLabel: string;
  readonly personId: string | null;
  readonly dueOn: Date;
  readonly raisedAt: Date;
  readonly detail: Record<string, unknown>;
  readonly acknowledgedAt: Date | null;
  readonly acknowledgedById: string | null;
  readonly recipientIds: string[];
}

/** Who sees which notices: all, or those addressed to the person plus all of the labs they manage. */
export type NoticeScope = 'all' | { readonly personId: string; readonly managedLabs: readonly string[] };

const COLUMNS = Prisma.sql`
  n.id, n.lab_id AS "labId", n.event_kind AS "eventKind", n.subject_kind AS "subjectKind", n.subject_id AS "subjectId",
  n.subject_label AS "subjectLabel", n.person_id AS "personId", n.due_on AS "dueOn", n.raised_at AS "raisedAt", n.detail,
  n.acknowledged_at AS "acknowledgedAt", n.acknowledged_by_id AS "acknowledgedById",
  ARRAY(SELECT r.person_id FROM notice_recipients r WHERE r.notice_id = n.id ORDER BY r.person_id) AS "recipientIds"`;

const uuids = (ids: readonly string[]) =>
  Prisma.sql`ARRAY[${Prisma.join(ids.length ? ids : ['00000000-0000-0000-0000-000000000000'])}]::uuid[]`;

@Injectable()
export class NoticeRepository {
  /** Newest first; `after` is the last raised_at and id seen. */
  page(db: Db, scope: NoticeScope, q: NoticeListQuery, limit: number, after: { raisedAt: Date; id: string } | null): Promise<NoticeRow[]> {
    const where: Prisma.Sql[] = [];
    if (scope !== 'all') {
      where.push(Prisma.sql`(n.lab_id = ANY(${uuids(scope.managedLabs)})
        OR EXISTS (SELECT 1 FROM notice_recipients r WHERE r.notice_id = n.id AND r.person_id = ${scope.personId}::uuid))`);
    }
    if (q.labId) where.push(Prisma.sql`n.lab_id = ${q.labId}::uuid`);
    if (q.acknowledged !== undefined)
      where.push(q.acknowledged ? Prisma.sql`n.acknowledged_at IS NOT NULL` : Prisma.sql`n.acknowledged_at IS NULL`);
    if (q.eventKind) where.push(Prisma.sql`n.event_kind = ${q.eventKind}`);
    if (q.subjectKind) where.push(Prisma.sql`n.subject_kind = ${q.subjectKind}`);
    if (q.personId) where.push(Prisma.sql`n.person_id = ${q.personId}::uuid`);
    if (q.raisedFrom) where.push(Prisma.sql`n.raised_at >= ${new Date(q.raisedFrom)}`);
    if (q.raisedBefore) where.push(Prisma.sql`n.raised_at < ${new Date(q.raisedBefore)}`);
    if (after) where.push(Prisma.sql`(n.raised_at, n.id) < (${after.raisedAt}, ${after.id}::uuid)`);
    return db.$queryRaw<NoticeRow[]>`
      SELECT ${COLUMNS} FROM notices n
      ${where.length ? Prisma.sql`WHERE ${Prisma.join(where, ' AND ')}` : Prisma.empty}
      ORDER BY n.raised_at DESC, n.id DESC LIMIT ${limit}`;
  }

  async findById(db: Db, id: string): Promise<NoticeRow | null> {
    const rows = await db.$queryRaw<NoticeRow[]>`SELECT ${COLUMNS} FROM notices n WHERE n.id = ${id}::uuid`;
    return rows[0] ?? null;
  }

  /** Acknowledges an open notice; false when it was already acknowledged (the first one stands). */
  async acknowledge(db: Db, id: string, personId: string, at: Date): Promise<boolean> {
    const count = await db.$executeRaw`
      UPDATE notices SET acknowledged_at = ${at}, acknowledged_by_id = ${personId}::uuid
      WHERE id = ${id}::uuid AND acknowledged_at IS NULL`;
    return count === 1;
  }
}
