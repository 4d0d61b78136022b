import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertCanReadLab, isAdministrator } from '../auth/access-policy';
import type { Actor, RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { isoDay } from '../due/lab-calendar';
import { NoticeRepository, type NoticeRow, type NoticeScope } from './notice.repository';
import type { NoticeListQuery, NoticeView } from './notice.schemas';

export function presentNotice(n: NoticeRow): NoticeView {
  return {
    id: n.id,
    labId: n.labId,
    eventKind: n.eventKind,
    subjectKind: n.subjectKind,
    subjectId: n.subjectId,
    subjectLabel: n.subjectLabel,
    personId: n.personId,
    dueOn: isoDay(n.dueOn),
    raisedAt: n.raisedAt.toISOString(),
    detail: n.detail,
    recipientIds: n.recipientIds,
    acknowledgedAt: n.acknowledgedAt?.toISOString() ?? null,
    acknowledgedById: n.acknowledgedById,
  };
}

function noticeScope(actor: Actor): NoticeScope {
  if (actor.kind !== 'person') throw new DomainError('forbidden', 'Notices are for people.');
  if (actor.registryRole) return 'all';
  return { personId: actor.id, managedLabs: [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId) };
}

/** A notice is visible to its recipients, its lab's managers, administrators and auditors. */
function canSee(actor: Actor, n: NoticeRow): boolean {
  if (actor.kind !== 'person') return false;
  return actor.registryRole !== null || actor.labs.get(n.labId) === 'manager' || n.recipientIds.includes(actor.id);
}

@Injectable()
export class NoticeService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly notices: NoticeRepository,
  ) {}

  async list(ctx: RequestContext, query: NoticeListQuery): Promise<Page<NoticeView>> {
    const scope = noticeScope(ctx.actor);
    if (query.labId) assertCanReadLab(ctx.actor, query.labId, 'lab');
    let after: { raisedAt: Date; id: string } | null = null;
    if (query.cursor !== undefined) {
      const { sortValue, id } = decodeCursor(query.cursor);
      after = { raisedAt: cursorInstant(sortValue), id };
    }
    const rows = await this.notices.page(this.prisma, scope, query, query.limit + 1, after);
    const page = toPage(rows, query.limit, (n) => encodeCursor(n.raisedAt.toISOString(), n.id));
    return { items: page.items.map(presentNotice), nextCursor: page.nextCursor };
  }

  /** Its recipients, the lab's managers and administrators acknowledge a notice, once; auditors only read. */
  async acknowledge(ctx: RequestContext, noticeId: string): Promise<NoticeView> {
    const actor = ctx.actor;
    if (actor.kind !== 'person') throw new DomainError('forbidden', 'Notices are for people.');
    return this.prisma.$transaction(async (tx) => {
      const notice = await this.notices.findById(tx, noticeId);
      if (!notice || !canSee(actor, notice)) throw new DomainError('not-found', 'No notice with that id.');
      const mayAcknowledge = isAdministrator(actor) || actor.labs.get(notice.labId) === 'manager' || notice.recipientIds.includes(actor.id);
      if (!mayAcknowledge)
        throw new DomainError('forbidden', 'Only its recipients, the lab’s managers or an administrator acknowledge a notice.');
      const now = this.clock.now();
      if (!(await this.notices.acknowledge(tx, noticeId, actor.id, now))) {
        throw new DomainError('invalid-state', 'This notice was already acknowledged.', undefined, {
          state: 'acknowledged',
          acknowledgedAt: notice.acknowledgedAt?.toISOString() ?? null,
          acknowledgedById: notice.acknowledgedById,
        });
      }
      const after = (await this.notices.findById(tx, noticeId)) ?? notice;
      await this.audit.record(tx, ctx, {
        action: 'acknowledge',
        entityType: 'notice',
        entityId: noticeId,
        labId: notice.labId,
        oldValues: { acknowledgedAt: null, acknowledgedById: null },
        newValues: { acknowledgedAt: after.acknowledgedAt?.toISOString(), acknowledgedById: actor.id },
      });
      return presentNotice(after);
    });
  }
}
