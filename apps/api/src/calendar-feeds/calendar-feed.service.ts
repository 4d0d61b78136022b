import { randomBytes } from 'node:crypto';

import { Injectable } from '@nestjs/common';
import { type Prisma, PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertLabManager } from '../auth/access-policy';
import type { Actor, RequestContext } from '../auth/actor';
import { sha256 } from '../auth/tokens';
import { Clock } from '../common/clock';
import { decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { dueState } from '../due/due.service';
import { isoDay, localDate } from '../due/lab-calendar';
import { type CreateFeed, FEED_TOKEN_SHAPE, type FeedListQuery, type FeedView } from './calendar-feed.schemas';
import { renderCalendar } from './icalendar';

type StoredFeed = Prisma.CalendarFeedGetPayload<object>;

const present = (f: StoredFeed): FeedView => ({
  id: f.id,
  labId: f.labId,
  name: f.name,
  showPeople: f.showPeople,
  createdById: f.createdById,
  createdAt: f.createdAt.toISOString(),
  revokedAt: f.revokedAt?.toISOString() ?? null,
  revokedById: f.revokedById,
});

const KIND_WORDS: Record<string, string> = {
  vessel: 'vessel calibration',
  'balance-calibration': 'balance calibration (external)',
  'balance-check': 'balance routine check',
  'reference-weight': 'reference weight certificate',
  instrument: 'instrument calibration',
  factor: 'personal factor renewal',
};
const CAUTION = 'The registry supports, and does not replace, the lab’s quality system, accredited calibration and local rules.';
const notFound = () => new DomainError('not-found', 'No calendar feed with that token.');

/** Feeds are the managers' (and administrators') to create and revoke; auditors see them. */
function assertMayList(actor: Actor, labId: string): void {
  if (actor.kind === 'person' && actor.registryRole === 'auditor') return;
  assertLabManager(actor, labId, 'lab');
}

@Injectable()
export class CalendarFeedService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
  ) {}

  async create(ctx: RequestContext, labId: string, body: CreateFeed): Promise<FeedView & { token: string; path: string }> {
    assertLabManager(ctx.actor, labId, 'lab');
    if (ctx.actor.kind !== 'person') throw new DomainError('forbidden', 'Feeds are created by people.');
    const personId = ctx.actor.id;
    const token = `rcal_${randomBytes(32).toString('base64url')}`;
    const feed = await this.prisma.$transaction(async (tx) => {
      if (!(await tx.lab.findUnique({ where: { id: labId }, select: { id: true } })))
        throw new DomainError('not-found', 'No lab with that id.');
      const created = await tx.calendarFeed.create({
        data: {
          labId,
          name: body.name,
          showPeople: body.showPeople,
          tokenHash: sha256(token),
          createdById: personId,
          createdAt: this.clock.now(),
        },
      });
      await this.audit.record(tx, ctx, {
        action: 'create',
        entityType: 'calendar-feed',
        entityId: created.id,
        labId,
        newValues: present(created),
      });
      return created;
    });
    return { ...present(feed), token, path: `/v1/calendar-feed.ics?token=${token}` };
  }

  async list(ctx: RequestContext, labId: string, q: FeedListQuery): Promise<Page<FeedView>> {
    assertMayList(ctx.actor, labId);
    if (!(await this.prisma.lab.findUnique({ where: { id: labId }, select: { id: true } })))
      throw new DomainError('not-found', 'No lab with that id.');
    const after = q.cursor === undefined ? null : decodeCursor(q.cursor).id;
    const rows = await this.prisma.calendarFeed.findMany({
      where: { labId, ...(after ? { id: { gt: after } } : {}) },
      orderBy: { id: 'asc' },
      take: q.limit + 1,
    });
    const page = toPage(rows, q.limit, (f) => encodeCursor(null, f.id));
    return { items: page.items.map(present), nextCursor: page.nextCursor };
  }

  async revoke(ctx: RequestContext, labId: string, feedId: string): Promise<FeedView> {
    assertLabManager(ctx.actor, labId, 'lab');
    if (ctx.actor.kind !== 'person') throw new DomainError('forbidden', 'Feeds are revoked by people.');
    const personId = ctx.actor.id;
    return this.prisma.$transaction(async (tx) => {
      const feed = await tx.calendarFeed.findUnique({ where: { id: feedId } });
      if (!feed || feed.labId !== labId) throw new DomainError('not-found', 'No calendar feed of this lab with that id.');
      if (feed.revokedAt) throw new DomainError('invalid-state', 'This feed is already revoked.', undefined, { state: 'revoked' });
      const revoked = await tx.calendarFeed.update({ where: { id: feedId }, data: { revokedAt: this.clock.now(), revokedById: personId } });
      await this.audit.record(tx, ctx, {
        action: 'revoke',
        entityType: 'calendar-feed',
        entityId: feedId,
        labId,
        oldValues: present(feed),
        newValues: present(revoked),
      });
      return present(revoked);
    });
  }

  /** The feed's iCalendar text; an unknown, malformed or revoked token is 404 (nothing says which). */
  async render(token: string): Promise<string> {
    if (!FEED_TOKEN_SHAPE.test(token)) throw notFound();
    const feed = await this.prisma.calendarFeed.findUnique({ where: { tokenHash: sha256(token) } });
    if (!feed || feed.revokedAt) throw notFound();
    const lab = await this.prisma.lab.findUniqueOrThrow({ where: { id: feed.labId } });
    const now = this.clock.now();
    const today = localDate(now, lab.timeZone);
    const rows = await this.prisma.dueDate.findMany({
      where: { labId: lab.id },
      orderBy: [{ dueOn: 'asc' }, { subjectKind: 'asc' }, { subjectId: 'asc' }],
    });
    const vesselTags = feed.showPeople ? null : await this.factorVesselTags(lab.id);
    return renderCalendar({
      productId: '-//Glassware calibration registry//Due dates//EN',
      name: `${lab.code} due dates`,
      stamp: now,
      events: rows.map((d) => {
        const dueOn = isoDay(d.dueOn);
        const state = dueState(today, dueOn, isoDay(d.dueSoonOn));
        const what = KIND_WORDS[d.subjectKind] ?? d.subjectKind;
        // A factor's label is "asset tag · holder"; without people, the vessel's tag alone.
        const label =
          vesselTags && d.subjectKind === 'factor' ? `${vesselTags.get(d.subjectId) ?? 'vessel'} (a person’s factor)` : d.subjectLabel;
        return {
          uid: `${d.subjectKind}-${d.subjectId}-${dueOn}@due.registry`,
          date: dueOn,
          summary: `${label}: ${what} due`,
          description: `${what} of ${label} is due on ${dueOn} (${state} as of ${today}, ${lab.code}).\n${CAUTION}`,
          categories: [d.subjectKind, state],
        };
      }),
    });
  }

  /** The vessel asset tag of each current factor falling due in the lab, to label factor events without their holder. */
  private async factorVesselTags(labId: string): Promise<Map<string, string>> {
    const rows = await this.prisma.$queryRaw<{ id: string; asset_tag: string }[]>`
      SELECT f.id, v.asset_tag
        FROM due_dates d
        JOIN factors f ON f.id = d.subject_id
        JOIN vessels v ON v.id = f.vessel_id
       WHERE d.lab_id = ${labId}::uuid AND d.subject_kind = 'factor'`;
    return new Map(rows.map((r) => [r.id, r.asset_tag]));
  }
}
