import { Injectable } from '@nestjs/common';
import { staircaseStep, type StaircaseState } from '@registry/metrology';

import { AuditWriter } from '../audit/audit-writer';
import type { SystemContext } from '../auth/actor';
import type { Db } from '../common/db';

interface PendingResult {
  readonly vesselId: string;
  readonly policyId: string;
  readonly calibrationId: string;
  readonly performedAt: Date;
  readonly verdict: 'pass' | 'fail';
  readonly reviewerId: string;
  readonly policyIntervalDays: number;
  readonly minIntervalDays: number;
  readonly maxIntervalDays: number;
  readonly maxStepDays: number;
  readonly lengthenAfterPasses: number;
  readonly currentIntervalDays: number | null;
  readonly passesInRow: number | null;
}

/**
 * Adaptive intervals (vessels under an adaptive policy): each approved result
 * reviewed since the policy became adaptive and not yet applied moves the
 * vessel's interval one step of the staircase (libs/metrology). A change is
 * recorded in interval_changes with the method, the reason and the person who
 * approved the result that caused it, and audited; the vessel's due date moves
 * with it (database trigger). Runs inside the scheduler's per-lab transaction,
 * under its lock; the unique key on the causing calibration makes a second
 * application impossible even so.
 */
@Injectable()
export class IntervalReviewer {
  constructor(private readonly audit: AuditWriter) {}

  async review(tx: Db, ctx: SystemContext, labId: string, now: Date): Promise<number> {
    // Driven from the lab's vessels under an adaptive policy (none: nothing to read), each one's
    // results found through calibrations_vessel_idx: as a plain join, the planner read every
    // calibration of the registry for each lab (1.7 s a lab at 1,000,000 calibrations).
    const pending = await tx.$queryRaw<PendingResult[]>`
      WITH adaptive AS MATERIALIZED (
        SELECT d.subject_id, p.id AS policy_id, p.adaptive_from, p.interval_days, p.min_interval_days, p.max_interval_days,
               p.max_step_days, p.lengthen_after_passes
        FROM due_policies p
        JOIN due_dates d ON d.policy_id = p.id AND d.lab_id = ${labId}::uuid AND d.subject_kind = 'vessel'
        WHERE p.adaptive
      )
      SELECT a.subject_id AS "vesselId", a.policy_id AS "policyId", c.id AS "calibrationId", c.performed_at AS "performedAt",
             c.verdict, c.reviewer_id AS "reviewerId", a.interval_days AS "policyIntervalDays",
             a.min_interval_days AS "minIntervalDays", a.max_interval_days AS "maxIntervalDays", a.max_step_days AS "maxStepDays",
             a.lengthen_after_passes AS "lengthenAfterPasses", si.interval_days AS "currentIntervalDays", si.passes_in_row AS "passesInRow"
      FROM adaptive a
      LEFT JOIN subject_intervals si ON si.subject_kind = 'vessel' AND si.subject_id = a.subject_id AND si.policy_id = a.policy_id
      CROSS JOIN LATERAL (
        SELECT c.id, c.performed_at, c.verdict, c.reviewer_id FROM calibrations c
        WHERE c.vessel_id = a.subject_id AND c.state = 'approved' AND c.verdict IN ('pass', 'fail')
          AND c.reviewed_at >= a.adaptive_from
          AND (si.subject_id IS NULL OR (c.performed_at, c.id) > (si.last_result_at, si.last_result_id))
        OFFSET 0 -- keeps the subquery per vessel (an index probe each) instead of one join over every calibration
      ) c
      ORDER BY a.subject_id, c.performed_at, c.id`;
    const byVessel = new Map<string, PendingResult[]>();
    for (const r of pending) byVessel.set(r.vesselId, [...(byVessel.get(r.vesselId) ?? []), r]);
    let changes = 0;
    for (const [vesselId, results] of byVessel) {
      const first = results[0] as PendingResult;
      const rule = {
        minIntervalDays: first.minIntervalDays,
        maxIntervalDays: first.maxIntervalDays,
        maxStepDays: first.maxStepDays,
        lengthenAfterPasses: first.lengthenAfterPasses,
      };
      // The interval in force, as due_computed reads it (clamped to the policy's current bounds).
      const start = first.currentIntervalDays ?? first.policyIntervalDays;
      let state: StaircaseState = {
        intervalDays: Math.min(Math.max(start, rule.minIntervalDays), rule.maxIntervalDays),
        passesInRow: first.passesInRow ?? 0,
      };
      for (const r of results) {
        const step = staircaseStep(rule, state, r.verdict === 'pass' ? 'in-tolerance' : 'out-of-tolerance');
        if (step.change !== 'unchanged') {
          const reason = `${step.reason} (calibration ${r.calibrationId} of ${r.performedAt.toISOString()})`;
          await tx.$executeRaw`
            INSERT INTO interval_changes (lab_id, policy_id, subject_kind, subject_id, method, old_interval_days, new_interval_days,
                                          reason, approved_by_id, based_on_calibration_id, changed_at)
            VALUES (${labId}::uuid, ${r.policyId}::uuid, 'vessel', ${vesselId}::uuid, 'staircase', ${state.intervalDays}, ${step.intervalDays},
                    ${reason}, ${r.reviewerId}::uuid, ${r.calibrationId}::uuid, ${now})`;
          await this.audit.record(tx, ctx, {
            action: 'interval-change',
            entityType: 'vessel',
            entityId: vesselId,
            labId,
            oldValues: { intervalDays: state.intervalDays },
            newValues: {
              intervalDays: step.intervalDays,
              method: 'staircase',
              basedOnCalibrationId: r.calibrationId,
              approvedById: r.reviewerId,
            },
            reason,
          });
          changes++;
        }
        state = { intervalDays: step.intervalDays, passesInRow: step.passesInRow };
      }
      const last = results[results.length - 1] as PendingResult;
      await tx.$executeRaw`
        INSERT INTO subject_intervals (subject_kind, subject_id, lab_id, policy_id, interval_days, passes_in_row, last_result_at, last_result_id, updated_at)
        VALUES ('vessel', ${vesselId}::uuid, ${labId}::uuid, ${last.policyId}::uuid, ${state.intervalDays}, ${state.passesInRow},
                ${last.performedAt}, ${last.calibrationId}::uuid, ${now})
        ON CONFLICT (subject_kind, subject_id) DO UPDATE SET
          policy_id = EXCLUDED.policy_id, interval_days = EXCLUDED.interval_days, passes_in_row = EXCLUDED.passes_in_row,
          last_result_at = EXCLUDED.last_result_at, last_result_id = EXCLUDED.last_result_id, updated_at = EXCLUDED.updated_at`;
    }
    return changes;
  }
}
