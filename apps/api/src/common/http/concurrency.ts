import { DomainError } from '../problem/domain-error';

/** Strong ETag of a versioned record. */
export const etagOf = (version: number): string => `"v${version}"`;

/**
 * The version a write expects, from If-Match. Missing → 428; malformed or
 * `*` → 412 (we only accept a version read from this API).
 */
export function expectedVersion(ifMatch: string | undefined): number {
  if (!ifMatch)
    throw new DomainError('precondition-required', 'Send If-Match with the ETag you read, so no one else’s change is overwritten.');
  const match = /^(?:W\/)?"v(\d{1,9})"$/.exec(ifMatch.trim());
  if (!match?.[1]) throw new DomainError('precondition-failed', 'If-Match does not name a version of this resource; read it again.');
  return Number(match[1]);
}

/** Thrown by repositories when `UPDATE ... WHERE version = expected` touched nothing. */
export function staleVersion(current?: number): DomainError {
  return new DomainError(
    'precondition-failed',
    'The resource was changed by someone else since you read it; read it again and retry.',
    undefined,
    current !== undefined ? { currentETag: etagOf(current) } : {},
  );
}
