import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { assertCanReadLab, readableLabs } from '../auth/access-policy';
import type { Actor, RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { daysBetween, isoDay } from './lab-calendar';
import { type DueAfter, DueRepository, type DueRow, type DueScope } from './due.repository';
import { type DueItemView, type DueListQuery, type DueState, SUBJECT_KINDS, type SubjectKind } from './due.schemas';

/** What a caller may see: items of the labs they read; factors their own, their managed labs', or all for registry roles. */
export function dueScope(actor: Actor): DueScope {
  if (actor.kind === 'credential') return { labs: readableLabs(actor), factors: 'none' };
  if (actor.registryRole) return { labs: 'all', factors: 'all' };
  const managedLabs = [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId);
  return { labs: readableLabs(actor), factors: { personId: actor.id, managedLabs } };
}

/** State of a due date on `today` (all YYYY-MM-DD in the lab's zone). */
export function dueState(today: string, dueOn: string, dueSoonOn: string): DueState {
  if (today > dueOn) return 'overdue';
  return today >= dueSoonOn ? 'due-soon' : 'current';
}

export function presentDue(row: DueRow): DueItemView {
  const today = isoDay(row.today);
  const dueOn = isoDay(row.dueOn);
  const dueSoonOn = isoDay(row.dueSoonOn);
  return {
    labId: row.labId,
    subjectKind: row.subjectKind,
    subjectId: row.subjectId,
    subjectLabel: row.subjectLabel,
    personId: row.personId,
    dueOn,
    dueSoonOn,
    state: dueState(today, dueOn, dueSoonOn),
    daysUntilDue: daysBetween(today, dueOn),
    lastDoneAt: row.lastDoneAt?.toISOString() ?? null,
    intervalDays: row.intervalDays,
    basis: row.basis as DueItemView['basis'],
  };
}

const CURSOR_KEY = new RegExp(`^(\\d{4}-\\d{2}-\\d{2})\\|(${SUBJECT_KINDS.join('|')})$`);

function decodeDueCursor(cursor: string): DueAfter {
  const { sortValue, id } = decodeCursor(cursor);
  const match = sortValue === null ? null : CURSOR_KEY.exec(sortValue);
  const dueOn = match?.[1];
  // A calendar date PostgreSQL stores: years 0001 to 9999, and a day that exists (no 31 February).
  if (!dueOn || !match[2] || dueOn < '0001' || Number.isNaN(Date.parse(dueOn)) || isoDay(new Date(`${dueOn}T00:00:00Z`)) !== dueOn) {
    throw new DomainError('validation-failed', 'The cursor is not one this API issued.', [{ field: 'cursor', reason: 'invalid cursor' }]);
  }
  return { dueOn, subjectKind: match[2] as SubjectKind, subjectId: id };
}

@Injectable()
export class DueService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly due: DueRepository,
  ) {}

  async list(ctx: RequestContext, query: DueListQuery): Promise<Page<DueItemView>> {
    if (query.labId) assertCanReadLab(ctx.actor, query.labId, 'lab');
    const scope = dueScope(ctx.actor);
    const after = query.cursor === undefined ? null : decodeDueCursor(query.cursor);
    const rows = await this.due.page(this.prisma, scope, query, this.clock.now(), query.limit + 1, after);
    const page = toPage(rows, query.limit, (r) => encodeCursor(`${isoDay(r.dueOn)}|${r.subjectKind}`, r.subjectId));
    return { items: page.items.map(presentDue), nextCursor: page.nextCursor };
  }
}
