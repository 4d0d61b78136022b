import { Injectable } from '@nestjs/common';
import { Prisma } from '@registry/data';

import type { Db } from '../common/db';
import type { DueState, SubjectKind } from './due.schemas';

/** Which due dates a caller may see: labs, and whose factors among them. */
export interface DueScope {
  readonly labs: 'all' | readonly string[];
  /** all: every factor of those labs; none: no factors; else the person's own and those of the labs they manage. */
  readonly factors: 'all' | 'none' | { readonly personId: string; readonly managedLabs: readonly string[] };
}

export interface DueFilter {
  readonly labId?: string;
  readonly subjectKind?: SubjectKind;
  readonly state?: DueState;
  readonly withinDays?: number;
  readonly personId?: string;
}

export interface DueRow {
  readonly labId: string;
  readonly subjectKind: SubjectKind;
  readonly subjectId: string;
  readonly subjectLabel: string;
  readonly personId: string | null;
  readonly dueOn: Date;
  readonly dueSoonOn: Date;
  readonly lastDoneAt: Date | null;
  readonly intervalDays: number | null;
  readonly basis: string;
  /** Today in the lab's zone. */
  readonly today: Date;
}

export interface DueAfter {
  readonly dueOn: string;
  readonly subjectKind: string;
  readonly subjectId: string;
}

const uuids = (ids: readonly string[]) =>
  Prisma.sql`ARRAY[${Prisma.join(ids.length ? ids : ['00000000-0000-0000-0000-000000000000'])}]::uuid[]`;

/** The page query of GET /v1/due (exported so its plan can be examined). */
export function duePageSql(scope: DueScope, filter: DueFilter, now: Date, limit: number, after: DueAfter | null): Prisma.Sql {
  const where: Prisma.Sql[] = [];
  if (scope.labs !== 'all') where.push(Prisma.sql`d.lab_id = ANY(${uuids(scope.labs)})`);
  if (scope.factors === 'none') where.push(Prisma.sql`d.subject_kind <> 'factor'`);
  else if (scope.factors !== 'all') {
    where.push(
      Prisma.sql`(d.subject_kind <> 'factor' OR d.person_id = ${scope.factors.personId}::uuid OR d.lab_id = ANY(${uuids(scope.factors.managedLabs)}))`,
    );
  }
  if (filter.labId) where.push(Prisma.sql`d.lab_id = ${filter.labId}::uuid`);
  if (filter.subjectKind) where.push(Prisma.sql`d.subject_kind = ${filter.subjectKind}`);
  if (filter.personId) where.push(Prisma.sql`d.person_id = ${filter.personId}::uuid`);
  if (filter.state === 'overdue') where.push(Prisma.sql`d.due_on < t.today`);
  if (filter.state === 'due-soon') where.push(Prisma.sql`d.due_soon_on <= t.today AND d.due_on >= t.today`);
  if (filter.state === 'current') where.push(Prisma.sql`d.due_soon_on > t.today`);
  if (filter.withinDays !== undefined) where.push(Prisma.sql`d.due_on <= t.today + ${filter.withinDays}::int`);
  if (after) {
    where.push(
      Prisma.sql`(d.due_on, d.subject_kind, d.subject_id) > (${after.dueOn}::date, ${after.subjectKind}, ${after.subjectId}::uuid)`,
    );
  }
  return Prisma.sql`
    SELECT d.lab_id AS "labId", d.subject_kind AS "subjectKind", d.subject_id AS "subjectId", d.subject_label AS "subjectLabel",
           d.person_id AS "personId", d.due_on AS "dueOn", d.due_soon_on AS "dueSoonOn", d.last_done_at AS "lastDoneAt",
           d.interval_days AS "intervalDays", d.basis, t.today
    FROM labs l
    CROSS JOIN LATERAL (SELECT (${now}::timestamptz AT TIME ZONE l.time_zone)::date AS today) t
    JOIN due_dates d ON d.lab_id = l.id
    ${where.length ? Prisma.sql`WHERE ${Prisma.join(where, ' AND ')}` : Prisma.empty}
    ORDER BY d.due_on, d.subject_kind, d.subject_id
    LIMIT ${limit}`;
}

/**
 * Reads of due_dates (kept by database triggers; this service never writes it).
 * Ordered by due date, kind and id; keyset pages; "today" is computed per lab
 * in its zone from the instant the service's clock gives.
 */
@Injectable()
export class DueRepository {
  page(db: Db, scope: DueScope, filter: DueFilter, now: Date, limit: number, after: DueAfter | null): Promise<DueRow[]> {
    return db.$queryRaw<DueRow[]>(duePageSql(scope, filter, now, limit, after));
  }
}
