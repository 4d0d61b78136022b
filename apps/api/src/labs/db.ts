import type { Prisma } from '@registry/data';

import { DomainError } from '../common/problem/domain-error';

/** What repositories take: the Prisma client or the transaction client of the use case. */
export type Db = Prisma.TransactionClient;

/** True for PostgreSQL unique violations as Prisma reports them. */
export function isUniqueViolation(error: unknown): boolean {
  return (error as { code?: unknown } | null)?.code === 'P2002';
}

/** Runs a write and turns a unique violation into a 409 naming the field. */
export async function uniqueOr409<T>(write: Promise<T>, field: string, detail: string): Promise<T> {
  try {
    return await write;
  } catch (error) {
    if (isUniqueViolation(error)) throw new DomainError('conflict', detail, [{ field, reason: 'already used' }]);
    throw error;
  }
}
