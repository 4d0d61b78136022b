import { Inject, Injectable, Logger } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import { runInTransaction } from './ambient-transaction';
import { IDEMPOTENCY_HEADER } from './idempotency-key';
import { IdempotencyRepository, type KeyedRequest, type KeyScope, type RecordedResponse } from './idempotency.repository';

/** The outer transaction of a keyed write: longer than any service asks for its own. */
const TX = { maxWait: 10_000, timeout: 60_000 } as const;
const PURGE_EVERY_MS = 60_000;
const PURGE_BATCH = 5_000;

export type KeyedOutcome =
  { readonly kind: 'ran'; readonly value: unknown } | { readonly kind: 'replay'; readonly response: RecordedResponse };

/** What the handler produced, and the answer to keep for it. */
export interface Answered {
  readonly value: unknown;
  readonly response: RecordedResponse;
}

/**
 * Runs a write sent with an `Idempotency-Key` in one transaction with its key.
 *
 * The key is claimed first (INSERT … ON CONFLICT on the caller's key): a second request
 * with the same key blocks on that row until the first one's transaction ends (at most
 * IDEMPOTENCY_WAIT_SECONDS, then 409 idempotency-key-in-use), and then finds the answer
 * (replay) or, when the first one failed and rolled back, claims the key itself. The
 * handler runs with every Prisma call of the services joined to this transaction (see
 * ambient-transaction.ts), and the answer is written to the key's row before the commit.
 * Write and key commit together or not at all: there is no moment at which the change is
 * stored and its key is not, so a crash anywhere leaves both or neither, and a retry
 * after it either replays or runs the write for the first time. A deferred trigger in
 * the database refuses to commit a claimed key without its answer.
 *
 * Only 2xx answers are kept: a request that fails (validation, 403, 404, 409, 412, …)
 * rolls back its claim with everything else, so a corrected retry may use the same key.
 */
@Injectable()
export class IdempotencyService {
  private readonly logger = new Logger('Idempotency');
  private nextPurge = 0;

  constructor(
    private readonly prisma: PrismaClient,
    private readonly keys: IdempotencyRepository,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async run(scope: KeyScope, request: KeyedRequest, handle: () => Promise<Answered>): Promise<KeyedOutcome> {
    const now = this.clock.now();
    this.purgeNowAndThen(now);
    const { ttlMs, waitMs } = this.config.idempotency;
    return this.prisma.$transaction(async (tx): Promise<KeyedOutcome> => {
      const claimed = await this.keys.claim(tx, scope, request, now, new Date(now.getTime() + ttlMs), waitMs).catch((error: unknown) => {
        throw isLockTimeout(error) ? inUse() : error;
      });
      if (!claimed) {
        const stored = await this.keys.find(tx, scope);
        // Always answered once committed (the trigger sees to it); without an answer, say so rather than run twice.
        if (!stored) throw inUse();
        if (!stored.hash.equals(request.hash)) throw reused(stored.method, stored.path);
        return { kind: 'replay', response: stored.response };
      }
      const answered = await runInTransaction(tx, handle);
      await this.keys.answer(tx, scope, answered.response);
      return { kind: 'ran', value: answered.value };
    }, TX);
  }

  /** Expired keys are deleted in the background, at most once a minute per instance. */
  private purgeNowAndThen(now: Date): void {
    if (now.getTime() < this.nextPurge) return;
    this.nextPurge = now.getTime() + PURGE_EVERY_MS;
    this.keys.purgeExpired(this.prisma, now, PURGE_BATCH).catch((error: unknown) => {
      this.logger.warn(`expired idempotency keys not purged: ${(error as Error).message}`);
    });
  }
}

const inUse = () =>
  new DomainError(
    'idempotency-key-in-use',
    `A request with this ${IDEMPOTENCY_HEADER} is still being processed; retry shortly to get its response.`,
    [{ field: IDEMPOTENCY_HEADER, reason: 'is in use by a request still running' }],
    {},
    { 'retry-after': '1' },
  );

const reused = (method: string, path: string) =>
  new DomainError(
    'idempotency-key-reused',
    `This ${IDEMPOTENCY_HEADER} was used for a different request (${method} ${path.split('?')[0]}, or another body or If-Match); use a new key.`,
    [{ field: IDEMPOTENCY_HEADER, reason: 'was used for a different request' }],
  );

interface CodedError {
  code?: unknown;
  message?: unknown;
  cause?: unknown;
  meta?: { code?: unknown; driverAdapterError?: { cause?: { originalCode?: unknown; code?: unknown } } };
}

/** PostgreSQL's lock_not_available (55P03), as Prisma or node-postgres reports it. */
function isLockTimeout(error: unknown): boolean {
  for (let e = error as CodedError | undefined, depth = 0; e && depth < 4; e = e.cause as CodedError | undefined, depth++) {
    if (e.code === '55P03' || e.meta?.code === '55P03') return true;
    const adapter = e.meta?.driverAdapterError?.cause;
    if (adapter?.originalCode === '55P03' || adapter?.code === '55P03') return true;
    if (typeof e.message === 'string' && e.message.includes('lock timeout')) return true;
  }
  return false;
}
