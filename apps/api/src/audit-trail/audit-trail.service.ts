import { Injectable } from '@nestjs/common';
import { Prisma, PrismaClient } from '@registry/data';
import { Pool } from 'pg';

import type { Actor, RequestContext } from '../auth/actor';
import { DomainError } from '../common/problem/domain-error';
import type { AuditTrailQuery } from './audit-trail.schemas';
import { type ChainReport, verifyChain } from './chain-verifier';

/** Administrators and auditors read the whole trail; lab managers their labs' entries; nobody else. */
function readableScope(actor: Actor): 'all' | string[] {
  if (actor.kind === 'person' && actor.registryRole) return 'all';
  if (actor.kind === 'person') {
    const managed = [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId);
    if (managed.length > 0) return managed;
  }
  throw new DomainError('forbidden', 'Only administrators, auditors and lab managers may read the audit trail.');
}

@Injectable()
export class AuditTrailService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly pool: Pool,
  ) {}

  async list(ctx: RequestContext, q: AuditTrailQuery) {
    const scope = readableScope(ctx.actor);
    if (scope !== 'all' && q.labId && !scope.includes(q.labId)) throw new DomainError('not-found', 'No such lab.');
    const where: Prisma.AuditEntryWhereInput = {
      ...(q.entityType ? { entityType: q.entityType } : {}),
      ...(q.entityId ? { entityId: q.entityId } : {}),
      ...(q.actorId ? { actorId: q.actorId } : {}),
      ...(q.labId ? { labId: q.labId } : scope === 'all' ? {} : { labId: { in: scope } }),
      ...(q.from || q.to ? { occurredAt: { ...(q.from ? { gte: new Date(q.from) } : {}), ...(q.to ? { lt: new Date(q.to) } : {}) } } : {}),
      ...(q.cursor ? { seq: { lt: BigInt(q.cursor) } } : {}),
    };
    const rows = await this.prisma.auditEntry.findMany({ where, orderBy: { seq: 'desc' }, take: q.limit + 1 });
    const items = rows.slice(0, q.limit).map((e) => ({
      seq: Number(e.seq),
      id: e.id,
      occurredAt: e.occurredAt.toISOString(),
      actor: { kind: e.actorKind, id: e.actorId },
      action: e.action,
      entityType: e.entityType,
      entityId: e.entityId,
      labId: e.labId,
      oldValues: e.oldValues,
      newValues: e.newValues,
      reason: e.reason,
      requestId: e.requestId,
      entryHash: Buffer.from(e.entryHash).toString('hex'),
    }));
    const last = items[items.length - 1];
    return { items, nextCursor: rows.length > q.limit && last ? String(last.seq) : null };
  }

  async verify(ctx: RequestContext): Promise<ChainReport & { verifiedAt: string }> {
    const a = ctx.actor;
    if (!(a.kind === 'person' && a.registryRole))
      throw new DomainError('forbidden', 'Only administrators and auditors may verify the audit trail.');
    const report = await verifyChain(this.pool);
    return { ...report, verifiedAt: new Date().toISOString() };
  }
}
