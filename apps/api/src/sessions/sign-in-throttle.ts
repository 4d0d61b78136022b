import { Inject, Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { APP_CONFIG, type AppConfig } from '../config/config.schema';
import type { Db } from '../common/db';

/** Advisory lock class for sign-in counting (objid = hash of the email or address). */
const LOCK_CLASS = 72707371;
/** A client address may fail this many times the per-email limit (several people behind one proxy). */
export const ADDRESS_FACTOR = 4;

/**
 * Throttles password guessing in the database, so it holds across instances.
 * Each attempt is recorded as a failure before the password is checked (and
 * removed when it succeeds), so parallel guesses count too. When an email has
 * SIGN_IN_MAX_FAILURES failures, or an address four times that, within the
 * window, further attempts get 429 until the oldest counted failure leaves it.
 */
@Injectable()
export class SignInThrottle {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Refuses with 429 when over a limit; otherwise records the attempt and returns its id. */
  async reserve(email: string, clientAddress: string): Promise<bigint> {
    const { signInMaxFailures: max, signInWindowMs: windowMs } = this.config.auth;
    const now = this.clock.now();
    const since = new Date(now.getTime() - windowMs);
    return this.prisma.$transaction(async (tx) => {
      await tx.$queryRaw`SELECT 1 FROM pg_advisory_xact_lock(${LOCK_CLASS}::int, hashtext(${`email:${email}`}))`;
      await tx.$queryRaw`SELECT 1 FROM pg_advisory_xact_lock(${LOCK_CLASS}::int, hashtext(${`address:${clientAddress}`}))`;
      const byEmail = await this.failureTimes(tx, { email }, since);
      const byAddress = await this.failureTimes(tx, { clientAddress }, since);
      const retryAt = Math.max(freeAt(byEmail, max, windowMs), freeAt(byAddress, max * ADDRESS_FACTOR, windowMs));
      if (retryAt > now.getTime()) {
        const seconds = Math.max(1, Math.ceil((retryAt - now.getTime()) / 1000));
        throw new DomainError(
          'too-many-requests',
          `Too many failed sign-ins; try again in ${seconds} s.`,
          undefined,
          {},
          {
            'retry-after': String(seconds),
          },
        );
      }
      const attempt = await tx.signInFailure.create({ data: { email, clientAddress, failedAt: now }, select: { id: true } });
      return attempt.id;
    });
  }

  /** After a successful sign-in: the email's failures are forgotten; old rows are pruned. */
  async succeeded(db: Db, email: string): Promise<void> {
    await db.signInFailure.deleteMany({ where: { email } });
    await this.prune(db);
  }

  /** The attempt stays recorded as a failure; rows that left the window are pruned. */
  async failed(db: Db): Promise<void> {
    await this.prune(db);
  }

  private prune(db: Db): Promise<unknown> {
    return db.signInFailure.deleteMany({
      where: { failedAt: { lt: new Date(this.clock.now().getTime() - this.config.auth.signInWindowMs) } },
    });
  }

  private async failureTimes(db: Db, who: { email: string } | { clientAddress: string }, since: Date): Promise<number[]> {
    const rows = await db.signInFailure.findMany({
      where: { ...who, failedAt: { gt: since } },
      orderBy: { failedAt: 'asc' },
      select: { failedAt: true },
      take: 10_000,
    });
    return rows.map((r) => r.failedAt.getTime());
  }
}

/** When the count of failures (oldest first) drops below `limit` again; 0 when it already is. */
function freeAt(times: number[], limit: number, windowMs: number): number {
  if (times.length < limit) return 0;
  return (times[times.length - limit] ?? 0) + windowMs;
}
