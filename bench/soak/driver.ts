import { randomUUID } from 'node:crypto';

import { LISTED_KINDS, LIST_SORTS, pipetteRunBody } from '../support/workload';
import type { SoakWorld } from './world';

/**
 * Mixed traffic of a busy registry from `connections` async clients on loopback, until the
 * duration or the request budget is spent. Each client draws its next piece of work by weight:
 * a factor lookup (by ids, or by asset tag and email) or a correction with the service
 * credential; a vessel page (lab + kind + in service, 50 a page, a random sort) by a manager; or
 * a calibration's whole way through the four-eyes workflow — an analyst creates a 25 mL pipette
 * run of ten replicates and submits it with the ETag of the draft, a manager of the lab (never
 * the performer) approves it with the ETag of the submission. A calibration started is carried
 * through even when the time runs out, so the budget can be passed by two requests a client.
 *
 * Every status code is counted per kind of request, every latency kept, and every write the
 * service acknowledged (2xx) recorded with its id, request id, verdict and factor, for the
 * invariant checks afterwards.
 */

export const OPERATION_KINDS = [
  'factor-by-ids',
  'factor-by-tag-email',
  'correction',
  'vessel-list',
  'calibration-create',
  'calibration-submit',
  'calibration-approve',
] as const;
export type OperationKind = (typeof OPERATION_KINDS)[number];

/** What a client does next: a single request, or a calibration's create → submit → approve. */
export type Work = 'factor-by-ids' | 'factor-by-tag-email' | 'correction' | 'vessel-list' | 'calibration';

/**
 * Draw weights, per hundred pieces of work. Most traffic is balances and analysers asking for
 * factors and corrections; managers page through vessels now and then; a calibration is rarer
 * but costs three writes. Measured at 64 clients on 2 cores this gives roughly 8 reads for each write.
 */
export const DEFAULT_MIX: Readonly<Record<Work, number>> = {
  'factor-by-ids': 40,
  'factor-by-tag-email': 20,
  correction: 20,
  'vessel-list': 12,
  calibration: 8,
};

export interface DriverOptions {
  readonly baseUrl: string;
  readonly connections: number;
  readonly durationMs: number;
  /** The request budget: no client starts new work once this many requests were sent. */
  readonly maxRequests: number;
  readonly mix?: Readonly<Record<Work, number>>;
  /** Per request (ms): a request that takes longer counts as a transport error. */
  readonly requestTimeoutMs?: number;
  /**
   * Pieces of work a second over all clients (a calibration's three requests are one piece), each
   * client keeping its own schedule (open loop). The first request of a piece is timed from when
   * it was due, not from when it was sent, so a service that falls behind shows in the latencies
   * (no coordinated omission). Unset: each client starts its next piece as soon as the last ended.
   */
  readonly rate?: number;
}

export interface AcknowledgedCalibration {
  readonly id: string;
  readonly labId: string;
  readonly createRequestId: string;
  submitRequestId?: string;
  verdict?: string | null;
  approveRequestId?: string;
  /** The factor the approval named (none for a failed run). */
  factorId?: string | null;
}

export interface Unexpected {
  readonly kind: OperationKind;
  readonly status: number | null;
  readonly detail: string;
}

export interface DriverResult {
  readonly startedAt: Date;
  readonly elapsedMs: number;
  readonly requests: number;
  readonly statuses: Record<OperationKind, Record<string, number>>;
  readonly latenciesMs: Record<OperationKind, number[]>;
  /** Requests that got no HTTP answer (refused, reset, timed out). */
  readonly transportErrors: number;
  /** Calibrations whose create was acknowledged, with what followed. */
  readonly calibrations: AcknowledgedCalibration[];
  /** The first few non-2xx answers and transport errors, for a diagnosis. */
  readonly unexpected: Unexpected[];
}

const MAX_UNEXPECTED = 50;

const pick = <T>(items: readonly T[]): T => items[Math.floor(Math.random() * items.length)] as T;

function drawer(mix: Readonly<Record<Work, number>>): () => Work {
  const entries = Object.entries(mix).filter(([, w]) => w > 0) as [Work, number][];
  const total = entries.reduce((s, [, w]) => s + w, 0);
  if (total <= 0) throw new Error('the traffic mix has no positive weight');
  return () => {
    let r = Math.random() * total;
    for (const [work, w] of entries) if ((r -= w) < 0) return work;
    return (entries.at(-1) as [Work, number])[0];
  };
}

interface Answer {
  readonly status: number;
  readonly body: Record<string, unknown>;
  readonly etag: string | null;
}

/**
 * Records each lab's routine balance check before the run (a quick check with its 100 g
 * weight, read at its conventional mass), by one of the lab's analysts: the submissions' balance
 * then has a passing check inside any lab's window, whatever day the registry was seeded.
 */
export async function checkBalances(baseUrl: string, world: SoakWorld, performedAt: Date): Promise<void> {
  for (const lab of world.labs) {
    const res = await fetch(`${baseUrl}/v1/balances/${lab.balanceId}/checks`, {
      method: 'POST',
      headers: { authorization: `Bearer ${lab.analystTokens[0]}`, 'content-type': 'application/json' },
      body: JSON.stringify({
        kind: 'quick',
        referenceWeightId: lab.checkWeight.id,
        readingsG: [lab.checkWeight.conventionalMassG, lab.checkWeight.conventionalMassG],
        limitG: '0.0003',
        performedAt: performedAt.toISOString(),
      }),
    });
    const body = (await res.json()) as Record<string, unknown>;
    if (res.status !== 201 || body.passed !== true) {
      throw new Error(`the routine check of balance ${lab.balanceId} answered ${res.status}: ${JSON.stringify(body).slice(0, 600)}`);
    }
  }
}

export async function drive(world: SoakWorld, o: DriverOptions): Promise<DriverResult> {
  const draw = drawer(o.mix ?? DEFAULT_MIX);
  const timeoutMs = o.requestTimeoutMs ?? 30_000;
  const statuses = Object.fromEntries(OPERATION_KINDS.map((k) => [k, {}])) as Record<OperationKind, Record<string, number>>;
  const latenciesMs = Object.fromEntries(OPERATION_KINDS.map((k) => [k, []])) as unknown as Record<OperationKind, number[]>;
  const calibrations: AcknowledgedCalibration[] = [];
  const unexpected: Unexpected[] = [];
  let requests = 0;
  let transportErrors = 0;
  const startedAt = new Date();
  const started = performance.now();
  const deadline = started + o.durationMs;
  const credential = { authorization: `Bearer ${world.credentialKey}` };

  const note = (kind: OperationKind, status: number | null, detail: string) => {
    if (unexpected.length < MAX_UNEXPECTED) unexpected.push({ kind, status, detail: detail.slice(0, 600) });
  };

  /** One request; null when no answer came (counted as a transport error). */
  /** One request, timed from `dueAt` (performance.now() time) when given, else from now. */
  const send = async (
    kind: OperationKind,
    method: string,
    path: string,
    headers: Record<string, string>,
    body?: unknown,
    dueAt?: number,
  ) => {
    requests++;
    const t0 = Math.min(dueAt ?? Infinity, performance.now());
    try {
      const res = await fetch(`${o.baseUrl}${path}`, {
        method,
        headers: body === undefined ? headers : { ...headers, 'content-type': 'application/json' },
        ...(body === undefined ? {} : { body: JSON.stringify(body) }),
        signal: AbortSignal.timeout(timeoutMs),
      });
      const text = await res.text();
      latenciesMs[kind].push(performance.now() - t0);
      const counts = statuses[kind];
      counts[res.status] = (counts[res.status] ?? 0) + 1;
      let parsed: Record<string, unknown> = {};
      try {
        parsed = text ? (JSON.parse(text) as Record<string, unknown>) : {};
      } catch {
        parsed = { text };
      }
      if (res.status < 200 || res.status >= 300) note(kind, res.status, `${method} ${path}: ${text}`);
      return { status: res.status, body: parsed, etag: res.headers.get('etag') } satisfies Answer;
    } catch (err) {
      transportErrors++;
      note(kind, null, `${method} ${path}: ${String((err as Error)?.cause ?? (err as Error)?.message ?? err)}`);
      return null;
    }
  };

  const calibrate = async (dueAt?: number) => {
    const lab = pick(world.labs);
    const analyst = { authorization: `Bearer ${pick(lab.analystTokens)}` };
    const createRequestId = randomUUID();
    const created = await send(
      'calibration-create',
      'POST',
      '/v1/calibrations',
      { ...analyst, 'x-request-id': createRequestId },
      pipetteRunBody(lab, pick(lab.pipetteIds), new Date(Date.now() - 60_000)),
      dueAt,
    );
    if (created?.status !== 201) return;
    const cal: AcknowledgedCalibration = { id: String(created.body.id), labId: lab.labId, createRequestId };
    calibrations.push(cal);
    const submitRequestId = randomUUID();
    const submitted = await send('calibration-submit', 'POST', `/v1/calibrations/${cal.id}/submit`, {
      ...analyst,
      'x-request-id': submitRequestId,
      'if-match': created.etag ?? '',
    });
    if (submitted?.status !== 200) return;
    cal.submitRequestId = submitRequestId;
    cal.verdict = (submitted.body.verdict as string | null | undefined) ?? null;
    const approveRequestId = randomUUID();
    const approved = await send('calibration-approve', 'POST', `/v1/calibrations/${cal.id}/approve`, {
      authorization: `Bearer ${pick(lab.managerTokens)}`,
      'x-request-id': approveRequestId,
      'if-match': submitted.etag ?? '',
    });
    if (approved?.status !== 200) return;
    cal.approveRequestId = approveRequestId;
    const impact = approved.body.impact as { factor?: { id?: string } | null } | undefined;
    cal.factorId = impact?.factor?.id ?? null;
  };

  const work = async (next: Work, dueAt?: number) => {
    switch (next) {
      case 'factor-by-ids': {
        const p = pick(world.pairs);
        await send(
          'factor-by-ids',
          'GET',
          `/v1/factors/current?${new URLSearchParams({ personId: p.personId, vesselId: p.vesselId })}`,
          credential,
          undefined,
          dueAt,
        );
        return;
      }
      case 'factor-by-tag-email': {
        const p = pick(world.pairs);
        await send(
          'factor-by-tag-email',
          'GET',
          `/v1/factors/current?${new URLSearchParams({ assetTag: p.assetTag, email: p.email })}`,
          credential,
          undefined,
          dueAt,
        );
        return;
      }
      case 'correction': {
        const p = pick(world.pairs);
        await send(
          'correction',
          'POST',
          '/v1/factors/corrections',
          credential,
          {
            personId: p.personId,
            vesselId: p.vesselId,
            indicatedVolumeMl: p.indicatedVolumeMl,
          },
          dueAt,
        );
        return;
      }
      case 'vessel-list': {
        const lab = pick(world.labs);
        const query = new URLSearchParams({
          labId: lab.labId,
          kind: pick(LISTED_KINDS),
          status: 'in-service',
          limit: '50',
          sort: pick(LIST_SORTS),
        });
        await send('vessel-list', 'GET', `/v1/vessels?${query}`, { authorization: `Bearer ${pick(lab.managerTokens)}` }, undefined, dueAt);
        return;
      }
      case 'calibration':
        await calibrate(dueAt);
    }
  };

  const closedLoop = async () => {
    while (performance.now() < deadline && requests < o.maxRequests) await work(draw());
  };
  /** Client `i` of n: a piece every n / rate seconds, the clients' schedules staggered. */
  const openLoop = async (rate: number, i: number) => {
    const intervalMs = (1000 * o.connections) / rate;
    for (let due = started + (i * intervalMs) / o.connections; due < deadline && requests < o.maxRequests; due += intervalMs) {
      const wait = due - performance.now();
      if (wait > 0) await new Promise((r) => setTimeout(r, wait));
      await work(draw(), due);
    }
  };
  const rate = o.rate;
  await Promise.all(Array.from({ length: o.connections }, (_, i) => (rate === undefined ? closedLoop() : openLoop(rate, i))));
  return {
    startedAt,
    elapsedMs: performance.now() - started,
    requests,
    statuses,
    latenciesMs,
    transportErrors,
    calibrations,
    unexpected,
  };
}
