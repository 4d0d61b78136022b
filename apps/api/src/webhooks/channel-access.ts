import { assertCanReadLab } from '../auth/access-policy';
import type { Actor } from '../auth/actor';
import { DomainError } from '../common/problem/domain-error';

/**
 * Who may see a lab's webhooks and delivery log: administrators, auditors and
 * the lab's managers. Analysts of the lab get 403; callers who cannot read the
 * lab, 404. (Changes: `assertLabManager`.)
 */
export function assertChannelReader(actor: Actor, labId: string, what: string): void {
  if (actor.kind === 'person' && (actor.registryRole !== null || actor.labs.get(labId) === 'manager')) return;
  assertCanReadLab(actor, labId, what);
  throw new DomainError('forbidden', 'Only the lab’s managers, administrators and auditors may see its delivery channels.');
}
