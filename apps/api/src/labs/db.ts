import type { Prisma } from '@registry/data';

import { DomainError } from '../common/problem/domain-error';

/** What repositories take: the Prisma client or the transaction client of the use case. */
export type Db = Prisma.TransactionClient;

interface PrismaUniqueViolation {
  code?: unknown;
  meta?: { driverAdapterError?: { cause?: { constraint?: { index?: unknown } } } };
}

/** True for PostgreSQL unique violations as Prisma reports them; with `index`, only for that unique index. */
export function isUniqueViolation(error: unknown, index?: string): boolean {
  const e = error as PrismaUniqueViolation | null;
  if (e?.code !== 'P2002') return false;
  return index === undefined || e.meta?.driverAdapterError?.cause?.constraint?.index === index;
}

/**
 * Runs a write and turns a violation of the unique index into a 409 naming the
 * field. Other unique violations still become a generic 409 in the problem filter.
 */
export async function uniqueOr409<T>(write: Promise<T>, index: string, field: string, detail: string): Promise<T> {
  try {
    return await write;
  } catch (error) {
    if (isUniqueViolation(error, index)) throw new DomainError('conflict', detail, [{ field, reason: 'already used' }]);
    throw error;
  }
}
