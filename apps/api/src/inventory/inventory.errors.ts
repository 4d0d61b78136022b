import { isUniqueViolation } from '../common/db';
import { DomainError } from '../common/problem/domain-error';

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
