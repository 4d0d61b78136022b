import type { FieldError } from '../common/problem/problem-catalog';
import type { PolicyValues, StoredChange, StoredPolicy } from './due-policy.repository';
import { type IntervalChangeView, LAB_SETTING_KINDS, type PolicyView } from './due-policy.schemas';

export function presentPolicy(p: StoredPolicy): PolicyView {
  return {
    id: p.id,
    labId: p.labId,
    subjectKind: p.subjectKind as PolicyView['subjectKind'],
    vesselKind: p.vesselKind as PolicyView['vesselKind'],
    accuracyClass: p.accuracyClass as PolicyView['accuracyClass'],
    intervalDays: p.intervalDays,
    dueSoonDays: p.dueSoonDays,
    adaptive:
      p.adaptive && p.minIntervalDays !== null && p.maxIntervalDays !== null && p.maxStepDays !== null && p.lengthenAfterPasses !== null
        ? {
            minIntervalDays: p.minIntervalDays,
            maxIntervalDays: p.maxIntervalDays,
            maxStepDays: p.maxStepDays,
            lengthenAfterPasses: p.lengthenAfterPasses,
            since: (p.adaptiveFrom ?? p.updatedAt).toISOString(),
          }
        : null,
    version: p.version,
    createdAt: p.createdAt.toISOString(),
    updatedAt: p.updatedAt.toISOString(),
  };
}

export function presentChange(c: StoredChange): IntervalChangeView {
  return {
    id: c.id,
    labId: c.labId,
    policyId: c.policyId,
    subjectKind: c.subjectKind as IntervalChangeView['subjectKind'],
    subjectId: c.subjectId,
    method: c.method as IntervalChangeView['method'],
    oldIntervalDays: c.oldIntervalDays,
    newIntervalDays: c.newIntervalDays,
    reason: c.reason,
    approvedById: c.approvedById,
    basedOnCalibrationId: c.basedOnCalibrationId,
    changedAt: c.changedAt.toISOString(),
  };
}

/** The rules across members (the database checks them again): what each kind may carry, and consistent bounds. */
export function policyProblems(
  kind: string,
  v: PolicyValues,
  scope: { vesselKind: string | null; accuracyClass: string | null },
): FieldError[] {
  const problems: FieldError[] = [];
  const labSetting = (LAB_SETTING_KINDS as readonly string[]).includes(kind);
  if (labSetting && v.intervalDays !== null) {
    const setting = kind === 'factor' ? 'factorValidityDays' : 'balanceCheckWindowDays';
    problems.push({ field: 'intervalDays', reason: `must be absent for ${kind}: the lab’s ${setting} is its interval` });
  }
  if (!labSetting && v.intervalDays === null) problems.push({ field: 'intervalDays', reason: `is required for ${kind}` });
  if (kind !== 'vessel' && scope.vesselKind !== null) problems.push({ field: 'vesselKind', reason: 'applies to vessel policies only' });
  if (kind !== 'vessel' && scope.accuracyClass !== null)
    problems.push({ field: 'accuracyClass', reason: 'applies to vessel policies only' });
  if (v.intervalDays !== null && v.dueSoonDays >= v.intervalDays)
    problems.push({ field: 'dueSoonDays', reason: 'must be less than intervalDays' });
  if (v.adaptive) {
    if (kind !== 'vessel')
      problems.push({ field: 'adaptive', reason: 'applies to vessel policies only (they have pass and fail results)' });
    else if (v.minIntervalDays !== null && v.maxIntervalDays !== null && v.intervalDays !== null) {
      if (v.minIntervalDays > v.maxIntervalDays)
        problems.push({ field: 'adaptive.minIntervalDays', reason: 'must not exceed maxIntervalDays' });
      else if (v.intervalDays < v.minIntervalDays || v.intervalDays > v.maxIntervalDays) {
        problems.push({ field: 'intervalDays', reason: 'must lie between adaptive.minIntervalDays and adaptive.maxIntervalDays' });
      }
    }
  }
  return problems;
}
