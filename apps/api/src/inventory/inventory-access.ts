import { assertLabManager, assertLabMember } from '../auth/access-policy';
import type { Actor } from '../auth/actor';
import { DomainError } from '../common/problem/domain-error';

/*
 * Who may write inventory. Reading follows the lab (access-policy.ts):
 * objects of a lab the caller cannot read do not exist for them (404).
 *
 *  - create: the lab's managers and administrators;
 *  - change: the same, except that the lab's analysts may change the
 *    "everyday" fields (where an item is kept, notes) and nothing else;
 *  - auditors and service credentials never write (403).
 */

/** Fields an analyst of the item's lab may change. */
export const ANALYST_FIELDS = ['location', 'notes'] as const;

export function assertCanCreate(actor: Actor, labId: string): void {
  assertLabManager(actor, labId, 'lab');
}

export function isLabManagerOrAdministrator(actor: Actor, labId: string): boolean {
  return actor.kind === 'person' && (actor.registryRole === 'administrator' || actor.labs.get(labId) === 'manager');
}

/**
 * Property-level check of a change: `fields` are the members the caller sent
 * (except `reason`). Analysts get a 403 naming each field they may not change.
 */
export function assertCanChange(actor: Actor, labId: string, what: string, fields: readonly string[]): void {
  if (isLabManagerOrAdministrator(actor, labId)) return;
  assertLabMember(actor, labId, what, ['analyst']);
  const refused = fields.filter((f) => !(ANALYST_FIELDS as readonly string[]).includes(f));
  if (refused.length > 0) {
    throw new DomainError(
      'forbidden',
      `Analysts may change only ${ANALYST_FIELDS.join(' and ')}; ${refused.join(', ')} ${refused.length === 1 ? 'is' : 'are'} for the lab’s managers.`,
      refused.map((field) => ({ field, reason: 'only the lab’s managers or an administrator may change this' })),
    );
  }
}
