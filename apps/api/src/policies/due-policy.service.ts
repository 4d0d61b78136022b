import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertCanReadLab, assertLabManager, readableLabs } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import type { Db } from '../common/db';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { policyProblems, presentChange, presentPolicy } from './due-policy.presenter';
import { DuePolicyRepository, type PolicyValues, type StoredPolicy } from './due-policy.repository';
import type { ChangeListQuery, CreatePolicy, IntervalChangeView, PolicyListQuery, PolicyView, UpdatePolicy } from './due-policy.schemas';

const adaptiveValues = (a: CreatePolicy['adaptive'] | null, from: Date | null) =>
  a
    ? { adaptive: true, ...a, adaptiveFrom: from }
    : { adaptive: false, minIntervalDays: null, maxIntervalDays: null, maxStepDays: null, lengthenAfterPasses: null, adaptiveFrom: null };

const valuesOf = (p: StoredPolicy): PolicyValues => ({
  intervalDays: p.intervalDays,
  dueSoonDays: p.dueSoonDays,
  adaptive: p.adaptive,
  minIntervalDays: p.minIntervalDays,
  maxIntervalDays: p.maxIntervalDays,
  maxStepDays: p.maxStepDays,
  lengthenAfterPasses: p.lengthenAfterPasses,
  adaptiveFrom: p.adaptiveFrom,
});

/**
 * Recalibration policies. Managers set their own lab's, administrators any
 * lab's; everyone who reads a lab (auditors too) reads its policies. Every
 * write is audited with its reason, and a new or changed interval is also a
 * row of interval_changes (method "policy", approved by the person who set it).
 * The database recomputes the affected due dates in the same transaction.
 */
@Injectable()
export class DuePolicyService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly policies: DuePolicyRepository,
  ) {}

  async create(ctx: RequestContext, body: CreatePolicy): Promise<PolicyView> {
    assertLabManager(ctx.actor, body.labId, 'lab');
    const now = this.clock.now();
    const values: PolicyValues = {
      intervalDays: body.intervalDays ?? null,
      dueSoonDays: body.dueSoonDays,
      ...adaptiveValues(body.adaptive, now),
    };
    const scope = { vesselKind: body.vesselKind ?? null, accuracyClass: body.accuracyClass ?? null };
    this.assertConsistent(body.subjectKind, values, scope);
    const created = await this.prisma.$transaction(async (tx) => {
      if (!(await tx.lab.findUnique({ where: { id: body.labId }, select: { id: true } })))
        throw new DomainError('not-found', 'No lab with that id.');
      const policy = await this.policies.create(tx, { labId: body.labId, subjectKind: body.subjectKind, ...scope, ...values }, now);
      await this.audit.record(tx, ctx, {
        action: 'create',
        entityType: 'due-policy',
        entityId: policy.id,
        labId: policy.labId,
        newValues: presentPolicy(policy),
        reason: body.reason,
      });
      await this.recordIntervalChange(tx, ctx, policy, null, body.reason, now);
      return policy;
    });
    return presentPolicy(created);
  }

  async get(ctx: RequestContext, policyId: string): Promise<PolicyView> {
    return presentPolicy(await this.readable(this.prisma, ctx, policyId));
  }

  async list(ctx: RequestContext, q: PolicyListQuery): Promise<Page<PolicyView>> {
    if (q.labId) assertCanReadLab(ctx.actor, q.labId, 'lab');
    const after = q.cursor === undefined ? null : decodeCursor(q.cursor).id;
    const rows = await this.policies.page(this.prisma, readableLabs(ctx.actor), q, q.limit + 1, after);
    const page = toPage(rows, q.limit, (p) => encodeCursor(null, p.id));
    return { items: page.items.map(presentPolicy), nextCursor: page.nextCursor };
  }

  async update(ctx: RequestContext, policyId: string, body: UpdatePolicy, ifMatch: string | undefined): Promise<PolicyView> {
    const before = await this.readable(this.prisma, ctx, policyId);
    assertLabManager(ctx.actor, before.labId, 'policy');
    const version = expectedVersion(ifMatch);
    if (version !== before.version) throw staleVersion(before.version);
    const now = this.clock.now();
    const adaptive =
      body.adaptive === undefined ? {} : adaptiveValues(body.adaptive, body.adaptive && before.adaptive ? before.adaptiveFrom : now);
    const values: PolicyValues = {
      ...valuesOf(before),
      ...(body.intervalDays !== undefined ? { intervalDays: body.intervalDays } : {}),
      ...(body.dueSoonDays !== undefined ? { dueSoonDays: body.dueSoonDays } : {}),
      ...adaptive,
    };
    this.assertConsistent(before.subjectKind, values, before);
    const after = await this.prisma.$transaction(async (tx) => {
      if (!(await this.policies.updateIfVersion(tx, policyId, version, values, now))) throw staleVersion();
      const updated = (await this.policies.findById(tx, policyId)) as StoredPolicy;
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: 'due-policy',
        entityId: policyId,
        labId: updated.labId,
        oldValues: presentPolicy(before),
        newValues: presentPolicy(updated),
        reason: body.reason,
      });
      if (updated.intervalDays !== before.intervalDays)
        await this.recordIntervalChange(tx, ctx, updated, before.intervalDays, body.reason, now);
      return updated;
    });
    return presentPolicy(after);
  }

  async changes(ctx: RequestContext, q: ChangeListQuery): Promise<Page<IntervalChangeView>> {
    if (ctx.actor.kind !== 'person') throw new DomainError('forbidden', 'Interval changes are for people.');
    if (q.labId) assertCanReadLab(ctx.actor, q.labId, 'lab');
    let after: { changedAt: Date; id: string } | null = null;
    if (q.cursor !== undefined) {
      const { sortValue, id } = decodeCursor(q.cursor);
      after = { changedAt: cursorInstant(sortValue), id };
    }
    const rows = await this.policies.changes(this.prisma, readableLabs(ctx.actor), q, q.limit + 1, after);
    const page = toPage(rows, q.limit, (c) => encodeCursor(c.changedAt.toISOString(), c.id));
    return { items: page.items.map(presentChange), nextCursor: page.nextCursor };
  }

  private assertConsistent(kind: string, values: PolicyValues, scope: { vesselKind: string | null; accuracyClass: string | null }): void {
    const problems = policyProblems(kind, values, scope);
    if (problems.length > 0) throw new DomainError('validation-failed', 'The policy is not consistent.', problems);
  }

  private async recordIntervalChange(tx: Db, ctx: RequestContext, p: StoredPolicy, old: number | null, reason: string, now: Date) {
    if (p.intervalDays === null || ctx.actor.kind !== 'person') return;
    await this.policies.recordChange(tx, {
      labId: p.labId,
      policyId: p.id,
      subjectKind: p.subjectKind,
      oldIntervalDays: old,
      newIntervalDays: p.intervalDays,
      reason,
      approvedById: ctx.actor.id,
      changedAt: now,
    });
  }

  private async readable(db: Db, ctx: RequestContext, policyId: string): Promise<StoredPolicy> {
    const policy = await this.policies.findById(db, policyId);
    if (!policy) throw new DomainError('not-found', 'No policy with that id.');
    assertCanReadLab(ctx.actor, policy.labId, 'policy');
    return policy;
  }
}
