import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { AuditContext } from '../auth/actor';

/** A change to record. Values are plain JSON snapshots without secrets. */
export interface AuditRecord {
  readonly action: string;
  readonly entityType: string;
  readonly entityId: string;
  readonly labId?: string | null;
  readonly oldValues?: unknown;
  readonly newValues?: unknown;
  readonly reason?: string | null;
}

/** Fields never copied into the audit trail. */
const SECRET_FIELDS = new Set(['passwordHash', 'tokenHash', 'secretHash', 'password', 'token', 'secret']);

/**
 * Appends to the audit trail inside the caller's transaction, so the entry
 * commits or rolls back with the change. Sequence, time and hash chain are set
 * by the database trigger.
 */
@Injectable()
export class AuditWriter {
  async record(tx: Prisma.TransactionClient, ctx: AuditContext, entry: AuditRecord): Promise<void> {
    const actorKind = ctx.actor.kind;
    const actorId = ctx.actor.kind === 'person' || ctx.actor.kind === 'credential' ? ctx.actor.id : null;
    await tx.$executeRaw`
      INSERT INTO audit_entries (actor_kind, actor_id, action, entity_type, entity_id, lab_id, old_values, new_values, reason, request_id, entry_hash)
      VALUES (${actorKind}, ${actorId}::uuid, ${entry.action}, ${entry.entityType}, ${entry.entityId}, ${entry.labId ?? null}::uuid,
              ${toJson(entry.oldValues)}::jsonb, ${toJson(entry.newValues)}::jsonb, ${entry.reason ?? null}, ${ctx.requestId}, '\\x'::bytea)`;
  }
}

/** JSON text of a snapshot: Decimals and Dates as strings, secrets removed, undefined dropped. */
export function toJson(value: unknown): string | null {
  if (value === undefined || value === null) return null;
  return JSON.stringify(value, (key, v: unknown) => {
    if (SECRET_FIELDS.has(key)) return undefined;
    if (typeof v === 'bigint') return v.toString();
    if (v instanceof Uint8Array) return undefined;
    return v;
  });
}
