import type { Actor } from '../auth/actor';

/*
 * Who may see which personal factors. A factor belongs to one person and one
 * vessel; nobody obtains a factor for a person other than the one named, and
 * only these may name someone else:
 *   - administrators and auditors: every factor;
 *   - a lab's managers: the factors of their lab;
 *   - service credentials: the factors of the labs they were given (scope checked by the guard);
 *   - everyone else (analysts): their own factors only.
 * Anything outside that answers 404, as if it did not exist.
 */

/** Which factors an actor may list and read by id. */
export type FactorReadScope =
  { readonly all: true } | { readonly all: false; readonly labIds: readonly string[]; readonly ownPersonId: string | null };

export function factorReadScope(actor: Actor): FactorReadScope {
  if (actor.kind === 'credential') return actor.labs === 'all' ? { all: true } : { all: false, labIds: [...actor.labs], ownPersonId: null };
  if (actor.registryRole) return { all: true };
  const managed = [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId);
  return { all: false, labIds: managed, ownPersonId: actor.id };
}

export function mayReadFactor(scope: FactorReadScope, factor: { readonly labId: string; readonly personId: string }): boolean {
  return scope.all || scope.labIds.includes(factor.labId) || scope.ownPersonId === factor.personId;
}

/**
 * For a lookup of one person's factor for one vessel:
 * `no-vessel` when the vessel's lab is not the actor's to see (answer as if no such vessel);
 * `not-yours` when the actor may see the lab but not another person's factors;
 * `ok` otherwise. `personId` is whom the request's identifier names (null: no one).
 */
export function lookupAccess(actor: Actor, vesselLabId: string, personId: string | null): 'ok' | 'no-vessel' | 'not-yours' {
  if (actor.kind === 'credential') return actor.labs === 'all' || actor.labs.has(vesselLabId) ? 'ok' : 'no-vessel';
  if (actor.registryRole) return 'ok';
  const role = actor.labs.get(vesselLabId);
  if (!role) return 'no-vessel';
  if (role === 'manager') return 'ok';
  return personId === actor.id ? 'ok' : 'not-yours';
}
