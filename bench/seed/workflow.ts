import { METROLOGY_LIBRARY_VERSION } from '@registry/metrology';

import type { CalibrationTemplate } from './calibration-templates';
import type { AuditRow } from './columns';
import type { SeededRandom } from './random';
import type { Balance, Lab, Person } from './world';

/* Where a generated calibration stands in the workflow, its workflow columns and the audit entry of its last step. */

export type State = 'draft' | 'submitted' | 'approved' | 'returned' | 'voided';

export interface Planned {
  readonly id: string;
  readonly performer: Person;
  readonly balance: Balance;
  readonly thermometerId: string;
  readonly performedAt: Date;
  readonly template: CalibrationTemplate;
  readonly shift: number;
  state: State;
  /** Voided after approval (its factor, if current, is withdrawn). */
  voidedAfterApproval: boolean;
}

const VOID_REASONS = ['Entered against the wrong vessel.', 'Duplicate of an earlier entry.', 'Water temperature logged for the wrong run.'];
const RETURN_NOTES = ['Replicate 3 looks mistyped; check the printout.', 'Air conditions missing from the worksheet; please add them.'];
const REVIEW_NOTES = [null, null, null, 'Raw data checked against the balance printout.', 'Worksheet complete.'];

const minutes = (n: number) => n * 60_000;

/** The workflow columns of one calibration and the audit entry of its last step. */
export function calibrationLines(p: Planned, lab: Lab, vesselId: string, rnd: SeededRandom, clamp: (ms: number) => Date) {
  const createdAt = clamp(p.performedAt.getTime() + minutes(rnd.int(10, 120)));
  const managers = lab.managers.filter((m) => m.id !== p.performer.id);
  const reviewer = managers.length > 0 ? rnd.pick(managers) : null;
  const enteredById = rnd.chance(0.1) && reviewer ? reviewer.id : p.performer.id;
  const submitted = p.state !== 'draft' && !(p.state === 'voided' && !p.voidedAfterApproval);
  const submittedAt = submitted ? clamp(createdAt.getTime() + minutes(rnd.int(5, 60))) : null;
  const reviewed = p.state === 'approved' || p.state === 'returned' || p.voidedAfterApproval;
  const reviewedAt = reviewed && submittedAt ? clamp(submittedAt.getTime() + minutes(rnd.int(60, 3 * 24 * 60))) : null;
  const voided = p.state === 'voided';
  const voidedAt = voided ? clamp((reviewedAt ?? createdAt).getTime() + minutes(rnd.int(30, 20 * 24 * 60))) : null;
  const voidReason = voided ? rnd.pick(VOID_REASONS) : null;
  const voidedById = voided ? (reviewer ?? p.performer).id : null;
  const reviewNote = p.state === 'returned' ? rnd.pick(RETURN_NOTES) : reviewed ? rnd.pick(REVIEW_NOTES) : null;
  const version = { draft: 1, submitted: 2, approved: 3, returned: 3, voided: p.voidedAfterApproval ? 4 : 2 }[p.state];
  const updatedAt = voidedAt ?? reviewedAt ?? submittedAt ?? createdAt;
  const reviewerId = reviewed ? (reviewer ?? p.performer).id : null;
  const audit = (factorId: string | null): AuditRow => {
    const old = {
      state: voided ? (p.voidedAfterApproval ? 'approved' : 'draft') : p.state === 'draft' ? null : 'submitted',
      version: version - 1,
    };
    switch (p.state) {
      case 'draft':
        return [
          'person',
          enteredById,
          'create',
          'calibration',
          p.id,
          lab.id,
          null,
          { vesselId, performerId: p.performer.id, performedAt: p.performedAt, state: 'draft', version: 1 },
          null,
        ];
      case 'submitted':
        return [
          'person',
          enteredById,
          'submit',
          'calibration',
          p.id,
          lab.id,
          { state: 'draft', version: 1 },
          { state: 'submitted', verdict: p.template.verdict, libraryVersion: METROLOGY_LIBRARY_VERSION, version },
          null,
        ];
      case 'returned':
        return ['person', reviewerId, 'return', 'calibration', p.id, lab.id, old, { state: 'returned', reviewerId, version }, reviewNote];
      case 'approved':
        return [
          'person',
          reviewerId,
          'approve',
          'calibration',
          p.id,
          lab.id,
          old,
          {
            state: 'approved',
            verdict: p.template.verdict,
            reviewerId,
            factorId,
            vesselQuarantined: p.template.verdict === 'fail',
            version,
          },
          reviewNote,
        ];
      case 'voided':
        return [
          'person',
          voidedById,
          'void',
          'calibration',
          p.id,
          lab.id,
          old,
          { state: 'voided', voidedById, withdrawnFactorId: factorId, version },
          voidReason,
        ];
    }
  };
  return {
    createdAt,
    enteredById,
    submittedAt,
    reviewerId,
    reviewedAt,
    reviewNote,
    voidedAt,
    voidReason,
    voidedById,
    version,
    updatedAt,
    audit,
  };
}
