import { createHash } from 'node:crypto';

import type { Pool } from 'pg';

/** One audit entry as the database renders it for hashing. */
export interface ChainRow {
  seq: string;
  id: string;
  occurred: string;
  actor_kind: string;
  actor_id: string | null;
  action: string;
  entity_type: string;
  entity_id: string;
  lab_id: string | null;
  old_values: string | null;
  new_values: string | null;
  reason: string | null;
  request_id: string | null;
  prev_hash: Buffer | null;
  entry_hash: Buffer;
}

export type ChainProblem = 'content-changed' | 'link-broken' | 'entry-missing';

export interface ChainReport {
  readonly intact: boolean;
  readonly entriesChecked: number;
  /** The last entry: note it to detect later removal of the newest entries. */
  readonly head: { readonly seq: number; readonly hash: string } | null;
  readonly firstBroken: { readonly seq: number; readonly problem: ChainProblem } | null;
}

const SEPARATOR = '\x1f';
const BATCH = 5_000;

/**
 * Recomputes every entry's SHA-256 in Node (independently of the database's
 * own function) over the same canonical text, and checks that each entry
 * names its predecessor's hash and that sequence numbers have no gap.
 * With `occurredUpTo`, the chain as it stood then (entries up to that instant).
 */
export async function verifyChain(pool: Pool, options: { readonly occurredUpTo?: Date } = {}): Promise<ChainReport> {
  let checked = 0;
  let previous: { seq: bigint; hash: Buffer } | null = null;
  for (;;) {
    const after: bigint = previous?.seq ?? 0n;
    const { rows }: { rows: ChainRow[] } = await pool.query<ChainRow>(
      `SELECT seq::text, id::text, to_char(occurred_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') AS occurred,
              actor_kind, actor_id::text, action, entity_type, entity_id, lab_id::text,
              old_values::text, new_values::text, reason, request_id, prev_hash, entry_hash
         FROM audit_entries a WHERE a.seq > $1 AND ($2::timestamptz IS NULL OR a.occurred_at <= $2) ORDER BY a.seq LIMIT ${BATCH}`,
      [after.toString(), options.occurredUpTo ?? null],
    );
    for (const row of rows) {
      const seq: bigint = BigInt(row.seq);
      const broken = problemWith(row, seq, previous);
      if (broken) return { intact: false, entriesChecked: checked, head: null, firstBroken: { seq: Number(seq), problem: broken } };
      checked += 1;
      previous = { seq, hash: row.entry_hash };
    }
    if (rows.length < BATCH) break;
  }
  return {
    intact: true,
    entriesChecked: checked,
    head: previous ? { seq: Number(previous.seq), hash: previous.hash.toString('hex') } : null,
    firstBroken: null,
  };
}

function problemWith(row: ChainRow, seq: bigint, previous: { seq: bigint; hash: Buffer } | null): ChainProblem | null {
  const expectedSeq = (previous?.seq ?? 0n) + 1n;
  if (seq !== expectedSeq) return 'entry-missing';
  const expectedPrev = previous?.hash ?? null;
  if (!(expectedPrev === null ? row.prev_hash === null : row.prev_hash !== null && row.prev_hash.equals(expectedPrev)))
    return 'link-broken';
  if (!digest(row).equals(row.entry_hash)) return 'content-changed';
  return null;
}

/** The same canonical text as the database function audit_entry_digest. */
export function digest(row: ChainRow): Buffer {
  const text = [
    row.seq,
    row.id,
    row.occurred,
    row.actor_kind,
    row.actor_id ?? '',
    row.action,
    row.entity_type,
    row.entity_id,
    row.lab_id ?? '',
    row.old_values ?? '',
    row.new_values ?? '',
    row.reason ?? '',
    row.request_id ?? '',
    row.prev_hash ? row.prev_hash.toString('hex') : '',
  ].join(SEPARATOR);
  return createHash('sha256').update(text, 'utf8').digest();
}
