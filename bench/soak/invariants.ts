import type { Pool } from 'pg';

import { verifyChain } from '../../apps/api/src/audit-trail/chain-verifier';
import type { DriverResult } from './driver';

export interface InvariantCheck {
  readonly id: string;
  readonly description: string;
  readonly pass: boolean;
  /** What was found (counts, the first offending ids). */
  readonly detail: Record<string, unknown>;
}

const sample = (ids: Iterable<string>) => [...ids].slice(0, 5);

/** Ids in `a` and not in `b`. */
function minus(a: ReadonlySet<string>, b: ReadonlySet<string>): string[] {
  return [...a].filter((x) => !b.has(x));
}

function sameSet(id: string, description: string, expected: ReadonlySet<string>, found: ReadonlySet<string>): InvariantCheck {
  const missing = minus(expected, found);
  const extra = minus(found, expected);
  return {
    id,
    description,
    pass: missing.length === 0 && extra.length === 0,
    detail: {
      acknowledged: expected.size,
      inDatabase: found.size,
      missing: missing.length,
      extra: extra.length,
      examples: sample([...missing, ...extra]),
    },
  };
}

/**
 * The database after a run, by SQL on the owner's connection: the registry's own rules (one
 * current factor per person and vessel; each factor's person and vessel those of its
 * calibration; the audit chain intact) and the run's writes, row for row: the calibrations
 * created, submitted and approved since `since` are exactly the acknowledged ones, each approval
 * of a passing (or no-limit) run issued the one factor its answer named and a failed one none,
 * and each acknowledged write has exactly one audit entry under its request id.
 */
export async function checkInvariants(pool: Pool, since: Date, run: DriverResult): Promise<InvariantCheck[]> {
  const q = async <T extends object>(sql: string, params: unknown[] = []) => (await pool.query<T>(sql, params)).rows;
  const checks: InvariantCheck[] = [];

  const duplicates = await q<{ person_id: string; vessel_id: string; n: number }>(
    `SELECT person_id, vessel_id, count(*)::int AS n FROM factors WHERE state = 'current' GROUP BY 1, 2 HAVING count(*) > 1`,
  );
  checks.push({
    id: 'one-current-factor',
    description: 'at most one current factor per (person, vessel)',
    pass: duplicates.length === 0,
    detail: { pairsWithMoreThanOne: duplicates.length, examples: duplicates.slice(0, 5) },
  });

  const withoutCurrent = await q<{ performer_id: string; vessel_id: string; n: number }>(
    `SELECT p.performer_id, p.vessel_id, (SELECT count(*)::int FROM factors f
              WHERE f.state = 'current' AND f.person_id = p.performer_id AND f.vessel_id = p.vessel_id) AS n
       FROM (SELECT DISTINCT performer_id, vessel_id FROM calibrations
              WHERE created_at >= $1 AND state = 'approved' AND verdict <> 'fail') p`,
    [since],
  );
  const notOne = withoutCurrent.filter((r) => r.n !== 1);
  checks.push({
    id: 'approved-pairs-current',
    description: 'each (performer, vessel) with a passing approval during the run has exactly one current factor',
    pass: notOne.length === 0,
    detail: { pairs: withoutCurrent.length, notExactlyOne: notOne.length, examples: notOne.slice(0, 5) },
  });

  const mismatched = await q<{ id: string }>(
    `SELECT f.id FROM factors f LEFT JOIN calibrations c ON c.id = f.calibration_id
      WHERE c.id IS NULL OR f.person_id <> c.performer_id OR f.vessel_id <> c.vessel_id OR f.lab_id <> c.lab_id`,
  );
  const [factorTotal] = await q<{ n: number }>('SELECT count(*)::int AS n FROM factors');
  checks.push({
    id: 'factor-matches-calibration',
    description: "every factor's person, vessel and lab are its calibration's performer, vessel and lab",
    pass: mismatched.length === 0,
    detail: { factors: factorTotal?.n ?? 0, mismatched: mismatched.length, examples: sample(mismatched.map((r) => r.id)) },
  });

  const t0 = performance.now();
  const chain = await verifyChain(pool);
  checks.push({
    id: 'audit-chain',
    description: 'the audit chain verifies from its first entry to its last',
    pass: chain.intact,
    detail: { entriesChecked: chain.entriesChecked, firstBroken: chain.firstBroken, seconds: (performance.now() - t0) / 1000 },
  });

  const rows = await q<{ id: string; state: string; verdict: string | null; submitted: boolean; reviewed: boolean }>(
    `SELECT id, state, verdict, submitted_at >= $1 AS submitted, reviewed_at >= $1 AS reviewed FROM calibrations WHERE created_at >= $1`,
    [since],
  );
  const acked = run.calibrations;
  checks.push(
    sameSet(
      'calibrations-created',
      'calibrations created during the run = acknowledged creates',
      new Set(acked.map((c) => c.id)),
      new Set(rows.map((r) => r.id)),
    ),
  );
  checks.push(
    sameSet(
      'calibrations-submitted',
      'calibrations submitted during the run = acknowledged submissions',
      new Set(acked.filter((c) => c.submitRequestId).map((c) => c.id)),
      new Set(rows.filter((r) => r.submitted).map((r) => r.id)),
    ),
  );
  checks.push(
    sameSet(
      'calibrations-approved',
      'calibrations approved during the run = acknowledged approvals',
      new Set(acked.filter((c) => c.approveRequestId).map((c) => c.id)),
      new Set(rows.filter((r) => r.reviewed && r.state === 'approved').map((r) => r.id)),
    ),
  );
  const verdictOf = new Map(rows.map((r) => [r.id, r.verdict]));
  const verdictsDiffer = acked.filter((c) => c.submitRequestId && verdictOf.get(c.id) !== c.verdict);
  checks.push({
    id: 'verdicts-as-answered',
    description: "each submitted calibration's stored verdict is the one its answer gave",
    pass: verdictsDiffer.length === 0,
    detail: { differing: verdictsDiffer.length, examples: sample(verdictsDiffer.map((c) => c.id)) },
  });

  const factors = await q<{ id: string; calibration_id: string }>(
    `SELECT f.id, f.calibration_id FROM factors f JOIN calibrations c ON c.id = f.calibration_id WHERE c.created_at >= $1`,
    [since],
  );
  const approved = acked.filter((c) => c.approveRequestId);
  const expectedFactors = approved.filter((c) => c.verdict !== 'fail');
  checks.push(
    sameSet(
      'factors-issued',
      'factors issued during the run = acknowledged approvals of passing (or no-limit) runs, each the factor its answer named',
      new Set([...expectedFactors.map((c) => `${c.id}:${c.factorId ?? 'none named'}`)]),
      new Set(factors.map((f) => `${f.calibration_id}:${f.id}`)),
    ),
  );

  const requestIds = acked.flatMap((c) => [c.createRequestId, c.submitRequestId, c.approveRequestId].filter((x): x is string => !!x));
  const entries = await q<{ request_id: string; n: number }>(
    `SELECT request_id, count(*)::int AS n FROM audit_entries
      WHERE entity_type = 'calibration' AND action IN ('create', 'submit', 'approve') AND occurred_at >= $1
      GROUP BY request_id`,
    [since],
  );
  const perRequest = new Map(entries.map((e) => [e.request_id, e.n]));
  const notOnce = requestIds.filter((id) => perRequest.get(id) !== 1);
  const ours = new Set(requestIds);
  const stray = entries.filter((e) => !ours.has(e.request_id));
  checks.push({
    id: 'audit-per-write',
    description: 'each acknowledged calibration write has exactly one audit entry under its request id, and there are no others',
    pass: notOnce.length === 0 && stray.length === 0,
    detail: {
      acknowledgedWrites: requestIds.length,
      auditEntries: entries.reduce((s, e) => s + e.n, 0),
      notExactlyOnce: notOnce.length,
      stray: stray.length,
      examples: sample([...notOnce, ...stray.map((e) => e.request_id)]),
    },
  });
  return checks;
}
