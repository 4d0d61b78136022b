import type { Prisma } from '@registry/data';

import { DomainError } from './problem/domain-error';

/** What repositories take: the Prisma client or the transaction client of the use case. */
export type Db = Prisma.TransactionClient;

interface UniqueViolation {
  code?: unknown;
  cause?: unknown;
  meta?: { driverAdapterError?: { cause?: { constraint?: { index?: unknown } } } };
}

/**
 * True for a unique violation, as Prisma (P2002) or node-postgres (23505)
 * reports it, also when wrapped; with `index`, only for that unique index
 * (known from Prisma's report).
 */
export function isUniqueViolation(error: unknown, index?: string): boolean {
  for (let e = error as UniqueViolation | undefined, depth = 0; e && depth < 4; e = e.cause as UniqueViolation | undefined, depth++) {
    if (e.code === 'P2002') return index === undefined || e.meta?.driverAdapterError?.cause?.constraint?.index === index;
    if (e.code === '23505') return index === undefined;
  }
  return false;
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
