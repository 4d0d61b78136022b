import { DomainError } from '../common/problem/domain-error';
import type { Actor, LabRole, Scope } from './actor';

/** The labs whose objects the actor may read: every lab, or a list. */
export function readableLabs(actor: Actor): 'all' | string[] {
  if (actor.kind === 'credential') return actor.labs === 'all' ? 'all' : [...actor.labs];
  if (actor.registryRole) return 'all';
  return [...actor.labs.keys()];
}

export function canReadLab(actor: Actor, labId: string): boolean {
  const labs = readableLabs(actor);
  return labs === 'all' || labs.includes(labId);
}

/** Object-level read check: an object of a lab the actor cannot see does not exist for them (404). */
export function assertCanReadLab(actor: Actor, labId: string, what: string): void {
  if (!canReadLab(actor, labId)) throw new DomainError('not-found', `No ${what} with that id.`);
}

/** Administrators, or the lab's managers. Others who can see the lab get 403; the rest 404. */
export function assertLabManager(actor: Actor, labId: string, what: string): void {
  if (actor.kind === 'person' && (actor.registryRole === 'administrator' || actor.labs.get(labId) === 'manager')) return;
  assertCanReadLab(actor, labId, what);
  throw new DomainError('forbidden', 'Only the lab’s managers or an administrator may do this.');
}

/** Any member of the lab who may record work (analysts and managers), or an administrator. */
export function assertLabMember(actor: Actor, labId: string, what: string, roles: readonly LabRole[] = ['manager', 'analyst']): void {
  if (actor.kind === 'person' && actor.registryRole === 'administrator') return;
  if (actor.kind === 'person') {
    const role = actor.labs.get(labId);
    if (role && roles.includes(role)) return;
  }
  assertCanReadLab(actor, labId, what);
  throw new DomainError('forbidden', 'Your role in this lab does not allow this.');
}

export function assertAdministrator(actor: Actor): void {
  if (actor.kind === 'person' && actor.registryRole === 'administrator') return;
  throw new DomainError('forbidden', 'Only an administrator may do this.');
}

export function isAdministrator(actor: Actor): boolean {
  return actor.kind === 'person' && actor.registryRole === 'administrator';
}

export function hasScope(actor: Actor, scope: Scope): boolean {
  return actor.kind === 'credential' && actor.scopes.has(scope);
}
