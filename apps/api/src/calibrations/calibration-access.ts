import { assertCanReadLab, assertLabManager, isAdministrator } from '../auth/access-policy';
import type { Actor } from '../auth/actor';
import { DomainError } from '../common/problem/domain-error';
import type { CalibrationRecord } from './calibration.repository';
import type { CalibrationState } from './calibration.schemas';

/*
 * Who may do what with a calibration. Reading follows the lab: a calibration
 * of a lab the caller cannot read does not exist for them (404); seeing but
 * not being allowed answers 403.
 *
 *  - create: analysts and managers of the vessel's lab for themselves; a
 *    manager of the lab (or an administrator) also on behalf of an analyst or
 *    manager of the lab;
 *  - edit and submit a draft or returned record: its performer, or the person
 *    who entered it on their behalf, while still a member of the lab;
 *  - approve and return: the lab's managers and administrators; with the lab's
 *    four-eyes rule, never the performer or the person who entered it;
 *  - void: the lab's managers and administrators in any state; the performer
 *    their own draft or returned record;
 *  - auditors and service credentials never write.
 */

const WHAT = 'calibration';

export const notFound = (): DomainError => new DomainError('not-found', 'No calibration with that id.');

export function assertCanRead(actor: Actor, cal: CalibrationRecord): void {
  assertCanReadLab(actor, cal.labId, WHAT);
}

const memberOf = (actor: Actor, labId: string): boolean => actor.kind === 'person' && actor.labs.has(labId);

/** Recording for oneself: a member of the lab. */
export function assertCanRecordOwn(actor: Actor, labId: string): void {
  if (memberOf(actor, labId)) return;
  assertCanReadLab(actor, labId, 'vessel');
  throw new DomainError('forbidden', 'Only the lab’s analysts and managers record calibrations, each their own.');
}

/** Recording on behalf of someone else: a manager of the lab, or an administrator. */
export function assertCanRecordFor(actor: Actor, labId: string): void {
  if (actor.kind === 'person' && (actor.labs.get(labId) === 'manager' || isAdministrator(actor))) return;
  assertCanReadLab(actor, labId, 'vessel');
  throw new DomainError('forbidden', 'Analysts record calibrations only for themselves; a lab manager may enter one for an analyst.', [
    { field: 'performerId', reason: 'only a manager of the lab may enter a calibration for someone else' },
  ]);
}

/** Editing and submitting: the performer or the person who entered it, while a member of the lab. */
export function assertCanEdit(actor: Actor, cal: CalibrationRecord): void {
  if (actor.kind === 'person' && (actor.id === cal.performerId || actor.id === cal.enteredById) && memberOf(actor, cal.labId)) return;
  assertCanRead(actor, cal);
  throw new DomainError('forbidden', 'Only the performer, or the manager who entered it, may change or submit this calibration.');
}

export function assertCanReview(actor: Actor, cal: CalibrationRecord): void {
  assertLabManager(actor, cal.labId, WHAT);
}

/** The four-eyes rule: the reviewer did not perform or enter the calibration. */
export function assertFourEyes(actor: Actor, cal: CalibrationRecord, required: boolean): void {
  if (!required || actor.kind !== 'person') return;
  if (actor.id === cal.performerId || actor.id === cal.enteredById) {
    throw new DomainError(
      'four-eyes',
      'This lab requires a second person: a calibration is approved or returned by someone who did not perform or enter it.',
    );
  }
}

export function assertCanVoid(actor: Actor, cal: CalibrationRecord): void {
  const managing = actor.kind === 'person' && (isAdministrator(actor) || actor.labs.get(cal.labId) === 'manager');
  const ownEditable = actor.kind === 'person' && actor.id === cal.performerId && memberOf(actor, cal.labId) && isEditable(cal.state);
  if (managing || ownEditable) return;
  assertCanRead(actor, cal);
  throw new DomainError('forbidden', 'Only the lab’s managers void a calibration; its performer may void their own draft.');
}

export const isEditable = (state: CalibrationState): boolean => state === 'draft' || state === 'returned';

/** 409 naming the current state. */
export function assertState(cal: CalibrationRecord, allowed: readonly CalibrationState[], action: string): void {
  if (allowed.includes(cal.state)) return;
  throw new DomainError(
    'invalid-state',
    `The calibration is ${cal.state}; it can be ${action} only when ${allowed.join(' or ')}.`,
    undefined,
    { state: cal.state },
  );
}
