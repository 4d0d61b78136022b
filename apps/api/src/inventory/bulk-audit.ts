import type { ClientBase } from 'pg';

import type { RequestContext } from '../auth/actor';
import { toJson } from '../audit/audit-writer';

export interface BulkAuditRecord {
  readonly entityId: string;
  readonly newValues: unknown;
}

/**
 * Appends one audit entry per created record with a single INSERT ... SELECT
 * FROM unnest(...), on the caller's open transaction. The chain trigger still
 * runs for every row, in the order given, so the trail reads exactly as if
 * each entry had been written by AuditWriter.record.
 */
export async function recordCreations(
  client: ClientBase,
  ctx: RequestContext,
  entry: { readonly entityType: string; readonly labId: string; readonly reason: string | null },
  records: readonly BulkAuditRecord[],
): Promise<void> {
  if (records.length === 0) return;
  await client.query(
    `INSERT INTO audit_entries (actor_kind, actor_id, action, entity_type, entity_id, lab_id, new_values, reason, request_id, entry_hash)
     SELECT $1, $2::uuid, 'create', $3, u.entity_id, $4::uuid, u.new_values::jsonb, $5, $6, '\\x'::bytea
       FROM unnest($7::text[], $8::text[]) WITH ORDINALITY AS u(entity_id, new_values, n)
      ORDER BY u.n`,
    [
      ctx.actor.kind,
      ctx.actor.id,
      entry.entityType,
      entry.labId,
      entry.reason,
      ctx.requestId,
      records.map((r) => r.entityId),
      records.map((r) => toJson(r.newValues)),
    ],
  );
}
