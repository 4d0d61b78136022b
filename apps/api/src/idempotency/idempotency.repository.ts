import { Injectable } from '@nestjs/common';

import type { Db } from '../common/db';

/** Who sent a keyed request: keys of different callers never meet. */
export interface KeyScope {
  readonly callerKind: 'person' | 'credential';
  readonly callerId: string;
  readonly key: string;
}

export interface KeyedRequest {
  readonly method: string;
  readonly path: string;
  readonly hash: Buffer;
}

/** The answer a key stands for. */
export interface RecordedResponse {
  readonly status: number;
  readonly headers: Record<string, string>;
  /** JSON text of the body; null for no body. */
  readonly body: string | null;
}

export interface StoredKey {
  readonly method: string;
  readonly path: string;
  readonly hash: Buffer;
  readonly response: RecordedResponse;
}

interface StoredRow {
  request_method: string;
  request_path: string;
  request_hash: Uint8Array;
  response_status: number | null;
  response_headers: Record<string, string>;
  response_body: string | null;
}

/** The `idempotency_keys` table, always inside the write's own transaction (except the purge). */
@Injectable()
export class IdempotencyRepository {
  /**
   * Claims the key for this request: inserts its row, or takes over an expired one.
   * While another transaction holds an uncommitted claim on the same key, PostgreSQL
   * makes this statement wait for that transaction's outcome, for at most `waitMs`
   * (then it fails with lock_not_available). False when the key is already answered.
   */
  async claim(tx: Db, scope: KeyScope, request: KeyedRequest, now: Date, expiresAt: Date, waitMs: number): Promise<boolean> {
    const [previous] = await tx.$queryRaw<{ previous: string }[]>`
      SELECT current_setting('lock_timeout') AS previous, set_config('lock_timeout', ${`${waitMs}ms`}, true)`;
    const claimed = await tx.$queryRaw<{ claimed: boolean }[]>`
      INSERT INTO idempotency_keys AS k (caller_kind, caller_id, idempotency_key, request_method, request_path, request_hash,
                                         created_at, expires_at)
      VALUES (${scope.callerKind}, ${scope.callerId}::uuid, ${scope.key}, ${request.method}, ${request.path}, ${request.hash},
              ${now}::timestamptz, ${expiresAt}::timestamptz)
      ON CONFLICT (caller_kind, caller_id, idempotency_key) DO UPDATE
        SET request_method = EXCLUDED.request_method, request_path = EXCLUDED.request_path, request_hash = EXCLUDED.request_hash,
            response_status = NULL, response_headers = '{}', response_body = NULL,
            created_at = EXCLUDED.created_at, expires_at = EXCLUDED.expires_at
        WHERE k.expires_at <= EXCLUDED.created_at
      RETURNING true AS claimed`;
    await tx.$queryRaw`SELECT set_config('lock_timeout', ${previous?.previous ?? '0'}, true)`;
    return claimed.length === 1;
  }

  /** The answered key (a claim that found it taken reads it in the same transaction). */
  async find(tx: Db, scope: KeyScope): Promise<StoredKey | null> {
    const [row] = await tx.$queryRaw<StoredRow[]>`
      SELECT request_method, request_path, request_hash, response_status, response_headers, response_body
        FROM idempotency_keys
       WHERE caller_kind = ${scope.callerKind} AND caller_id = ${scope.callerId}::uuid AND idempotency_key = ${scope.key}`;
    if (!row || row.response_status === null) return null;
    return {
      method: row.request_method,
      path: row.request_path,
      hash: Buffer.from(row.request_hash),
      response: { status: row.response_status, headers: row.response_headers, body: row.response_body },
    };
  }

  /** Records the answer on the claimed row, before the transaction commits. */
  async answer(tx: Db, scope: KeyScope, response: RecordedResponse): Promise<void> {
    await tx.$executeRaw`
      UPDATE idempotency_keys
         SET response_status = ${response.status}, response_headers = ${JSON.stringify(response.headers)}::jsonb,
             response_body = ${response.body}
       WHERE caller_kind = ${scope.callerKind} AND caller_id = ${scope.callerId}::uuid AND idempotency_key = ${scope.key}`;
  }

  /** Deletes up to `limit` expired keys; returns how many. */
  async purgeExpired(db: Db, now: Date, limit: number): Promise<number> {
    return db.$executeRaw`
      DELETE FROM idempotency_keys
       WHERE ctid = ANY (ARRAY(SELECT ctid FROM idempotency_keys WHERE expires_at <= ${now}::timestamptz LIMIT ${limit}))`;
  }
}
