import { DomainError } from '../common/problem/domain-error';

/** A unique violation reported by Prisma (P2002) or by PostgreSQL itself (23505). */
export function isUniqueViolation(error: unknown): boolean {
  for (let e = error as { code?: unknown; cause?: unknown } | undefined, depth = 0; e && depth < 4; e = e.cause as typeof e, depth++) {
    if (e.code === 'P2002' || e.code === '23505') return true;
  }
  return false;
}

/** The asset tag is the only unique value a client chooses. */
export function assetTagTaken(assetTag: string, what: string): DomainError {
  return new DomainError('conflict', `A ${what} with asset tag ${assetTag} is already registered.`, [
    { field: 'assetTag', reason: 'is already used by another item' },
  ]);
}

/** Runs a write; a unique violation becomes a 409 naming the asset tag. */
export async function withUniqueTag<T>(assetTag: string, what: string, write: () => Promise<T>): Promise<T> {
  try {
    return await write();
  } catch (error) {
    if (isUniqueViolation(error)) throw assetTagTaken(assetTag, what);
    throw error;
  }
}

export const invalid = (field: string, reason: string): DomainError =>
  new DomainError('validation-failed', `${field} ${reason}.`, [{ field, reason }]);
