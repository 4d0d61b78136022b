import { Injectable } from '@nestjs/common';
import { type Prisma, PrismaClient } from '@registry/data';

import { assertCanReadLab, readableLabs } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { AuditWriter } from '../audit/audit-writer';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import type { Page } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { assertCanChange, assertCanCreate } from './inventory-access';
import { type ListArgs, type ListFilters, type ListSpec, listArgs, pageFrom } from './inventory-list';

export type Tx = Prisma.TransactionClient;

/** What every inventory record carries (API shape: decimals and dates as strings). */
export interface InventoryRecord {
  readonly id: string;
  readonly labId: string;
  readonly version: number;
  readonly createdAt: string;
  readonly updatedAt: string;
}

const fieldsOf = (record: InventoryRecord): Readonly<Record<string, unknown>> => record as unknown as Record<string, unknown>;

/** One resource's identity and the fields whose change needs a reason. */
export interface ResourceDef {
  /** In messages: "vessel", "balance" ... */
  readonly what: string;
  /** In the audit trail. */
  readonly entityType: string;
  /** Stored fields a PATCH may change, in a stable order (for the audit entry). */
  readonly writable: readonly string[];
  /** Changing any of these needs a `reason` (status, acceptance limits). */
  readonly needsReason: readonly string[];
}

export interface UpdateSteps<T extends InventoryRecord, P> {
  load(tx: Tx, id: string): Promise<T | null>;
  /** The record after the change, with derived fields; throws validation errors. */
  apply(current: T, patch: P): T;
  /** UPDATE ... WHERE id AND version = expected; null when the version moved on. */
  write(tx: Tx, id: string, expected: number, changes: Partial<T>, now: Date): Promise<T | null>;
}

/** Interactive transactions here are short; the bulk import sets its own limit. */
const TX = { maxWait: 5_000, timeout: 15_000 } as const;

/**
 * The steps every inventory resource shares: access checks, the transaction,
 * optimistic concurrency, the reason rule and the audit entry with old and
 * new values. Resources supply only their data and domain rules.
 */
@Injectable()
export class InventoryWorkflow {
  constructor(
    readonly prisma: PrismaClient,
    private readonly audit: AuditWriter,
    readonly clock: Clock,
  ) {}

  async create<T extends InventoryRecord>(
    ctx: RequestContext,
    def: ResourceDef,
    labId: string,
    insert: (tx: Tx, now: Date) => Promise<T>,
  ): Promise<T> {
    assertCanCreate(ctx.actor, labId);
    return this.prisma.$transaction(async (tx) => {
      await assertLabOpen(tx, labId);
      const created = await insert(tx, this.clock.now());
      await this.audit.record(tx, ctx, { action: 'create', entityType: def.entityType, entityId: created.id, labId, newValues: created });
      return created;
    }, TX);
  }

  async get<T extends InventoryRecord>(ctx: RequestContext, def: ResourceDef, id: string, load: (tx: Tx) => Promise<T | null>): Promise<T> {
    const found = await load(this.prisma);
    if (!found) throw notFound(def);
    assertCanReadLab(ctx.actor, found.labId, def.what);
    return found;
  }

  async list<T extends InventoryRecord>(
    ctx: RequestContext,
    spec: ListSpec,
    filters: ListFilters,
    find: (tx: Tx, args: ListArgs) => Promise<T[]>,
  ): Promise<Page<T>> {
    const args = listArgs(spec, readableLabs(ctx.actor), filters);
    if (!args) return { items: [], nextCursor: null };
    return pageFrom(spec, filters, await find(this.prisma, args));
  }

  async update<T extends InventoryRecord, P extends { readonly reason?: string | undefined }>(
    ctx: RequestContext,
    def: ResourceDef,
    id: string,
    ifMatch: string | undefined,
    patch: P,
    steps: UpdateSteps<T, P>,
  ): Promise<T> {
    return this.prisma.$transaction(async (tx) => {
      const current = await steps.load(tx, id);
      if (!current) throw notFound(def);
      assertCanReadLab(ctx.actor, current.labId, def.what);
      assertCanChange(
        ctx.actor,
        current.labId,
        def.what,
        Object.keys(patch).filter((k) => k !== 'reason'),
      );
      const expected = expectedVersion(ifMatch);
      if (expected !== current.version) throw staleVersion(current.version);
      const before = fieldsOf(current);
      const next = fieldsOf(steps.apply(current, patch));
      const changed = def.writable.filter((f) => !same(before[f], next[f]));
      if (changed.length === 0) return current;
      const reason = patch.reason ?? reasonFallback(patch);
      const guarded = changed.filter((f) => def.needsReason.includes(f));
      if (guarded.length > 0 && !reason) {
        throw new DomainError('validation-failed', `Give a reason for changing ${guarded.join(', ')}.`, [
          { field: 'reason', reason: `is required when ${guarded.join(', ')} changes` },
        ]);
      }
      const changes = Object.fromEntries(changed.map((f) => [f, next[f]])) as Partial<T>;
      const updated = await steps.write(tx, id, expected, changes, this.clock.now());
      if (!updated) throw staleVersion();
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: def.entityType,
        entityId: id,
        labId: current.labId,
        oldValues: { ...Object.fromEntries(changed.map((f) => [f, before[f]])), version: current.version },
        newValues: { ...Object.fromEntries(changed.map((f) => [f, fieldsOf(updated)[f]])), version: updated.version },
        reason: reason ?? null,
      });
      return updated;
    }, TX);
  }
}

/** A lab override's own reason also explains the change when no `reason` is sent. */
function reasonFallback(patch: object): string | undefined {
  const own = (patch as { limitOverrideReason?: unknown }).limitOverrideReason;
  return typeof own === 'string' ? own : undefined;
}

const same = (a: unknown, b: unknown): boolean => (a ?? null) === (b ?? null);

export const notFound = (def: Pick<ResourceDef, 'what'>): DomainError => new DomainError('not-found', `No ${def.what} with that id.`);

/** The lab exists and is not retired; new items go only into open labs. */
export async function assertLabOpen(tx: Tx, labId: string): Promise<void> {
  const lab = await tx.lab.findUnique({ where: { id: labId }, select: { retiredAt: true } });
  if (!lab) throw new DomainError('not-found', 'No lab with that id.');
  if (lab.retiredAt)
    throw new DomainError('conflict', 'The lab is retired; it takes no new items.', [{ field: 'labId', reason: 'lab is retired' }]);
}
