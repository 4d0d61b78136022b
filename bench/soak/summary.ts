import { percentile } from '../support/measure';
import { type DriverResult, OPERATION_KINDS, type OperationKind } from './driver';
import type { InvariantCheck } from './invariants';

export interface OperationSummary {
  readonly kind: OperationKind;
  readonly requests: number;
  readonly perSecond: number;
  readonly statusCodes: Record<string, number>;
  readonly non2xx: number;
  readonly server5xx: number;
  readonly latencyMs: { readonly p50: number; readonly p99: number; readonly max: number };
}

export interface SoakVerdict {
  readonly pass: boolean;
  /** Why the run failed, one line each. */
  readonly failures: string[];
}

/**
 * p99 targets of the service benchmark (issue "Scale", bench/service.bench.ts): factor endpoints
 * under 25 ms at 64 connections; calibration submission under 100 ms. Here they are reported
 * beside the soak's figures, not enforced: the soak mixes every kind at once on 2 shared cores,
 * where the benchmark measures each alone.
 */
export const P99_TARGETS_MS: Partial<Record<OperationKind, number>> = {
  'factor-by-ids': 25,
  'factor-by-tag-email': 25,
  correction: 25,
  'calibration-create': 100,
};

export function summarize(run: DriverResult): OperationSummary[] {
  const seconds = run.elapsedMs / 1000;
  return OPERATION_KINDS.map((kind) => {
    const codes = run.statuses[kind];
    const sorted = [...run.latenciesMs[kind]].sort((a, b) => a - b);
    const count = (test: (code: number) => boolean) => Object.entries(codes).reduce((s, [code, n]) => s + (test(Number(code)) ? n : 0), 0);
    return {
      kind,
      requests: sorted.length,
      perSecond: sorted.length / seconds,
      statusCodes: codes,
      non2xx: count((c) => c < 200 || c >= 300),
      server5xx: count((c) => c >= 500),
      latencyMs: {
        p50: sorted.length ? percentile(sorted, 50) : 0,
        p99: sorted.length ? percentile(sorted, 99) : 0,
        max: sorted.length ? (sorted.at(-1) as number) : 0,
      },
    };
  });
}

/**
 * The run fails on any 5xx or request without an answer, on any other non-2xx answer (every
 * request the driver sends is valid, so a refusal means a rule broke under load), on a broken
 * invariant, and on an RSS trend above `slopeLimitMbPerMin` (when a trend was measured).
 */
export function verdict(
  operations: readonly OperationSummary[],
  run: DriverResult,
  invariants: readonly InvariantCheck[],
  memory?: { readonly slopeMbPerMin: number; readonly slopeLimitMbPerMin: number },
): SoakVerdict {
  const failures: string[] = [];
  const total5xx = operations.reduce((s, o) => s + o.server5xx, 0);
  if (total5xx > 0) failures.push(`${total5xx} answers with a 5xx status`);
  const other = operations.reduce((s, o) => s + o.non2xx - o.server5xx, 0);
  if (other > 0) failures.push(`${other} refusals (4xx) of requests the driver built valid`);
  if (run.transportErrors > 0) failures.push(`${run.transportErrors} requests got no answer`);
  for (const c of invariants.filter((x) => !x.pass)) failures.push(`invariant ${c.id} broken: ${JSON.stringify(c.detail)}`);
  if (memory && !(memory.slopeMbPerMin < memory.slopeLimitMbPerMin)) {
    failures.push(`RSS grew ${memory.slopeMbPerMin.toFixed(2)} MB/min over the second half (limit ${memory.slopeLimitMbPerMin})`);
  }
  return { pass: failures.length === 0, failures };
}
