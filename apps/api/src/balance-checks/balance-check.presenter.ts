import type { BalanceCheckView, BalanceStatusOutcome } from './balance-check.responses';
import type { StoredCheck } from './balance-check.repository';
import type { ImpactView } from '../impact/impact.schemas';

/** What the service writes to `results`: the library's evaluation and what the check did. */
export interface StoredResults {
  readonly evaluation: unknown;
  readonly balanceStatus: BalanceStatusOutcome;
  readonly minimumWeightStored: boolean;
  readonly impact: ImpactView | null;
}

export function toView(check: StoredCheck): BalanceCheckView {
  const results = check.results as StoredResults;
  return {
    id: check.id,
    labId: check.labId,
    balanceId: check.balanceId,
    kind: check.kind,
    performedAt: check.performedAt.toISOString(),
    performedBy: { id: check.performedById, displayName: check.performedByName },
    referenceWeightId: check.referenceWeightId,
    passed: check.passed,
    minimumWeightG: check.minimumWeightG,
    minimumWeightStored: results.minimumWeightStored,
    balanceStatus: results.balanceStatus,
    impact: results.impact,
    libraryVersion: check.libraryVersion,
    notes: check.notes,
    createdAt: check.createdAt.toISOString(),
    inputs: check.inputs,
    results: results.evaluation,
  } as BalanceCheckView;
}
