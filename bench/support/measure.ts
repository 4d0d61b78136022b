/**
 * A small timing harness for synchronous functions, on the main thread only (no workers,
 * so one core does the work). Clock: process.hrtime.bigint (monotonic, ns).
 *
 * Per case: a warm-up of fixed duration (lets V8 optimise the code), then samples for a
 * fixed duration. A sample times a batch of calls and records the mean time per call:
 * the batch is sized from the warm-up so that one sample lasts at least `minBatchNs`,
 * which keeps the clock's own cost (tens of ns) out of sub-microsecond cases. Batches
 * of one call are used for anything slower, so slow cases get true per-call percentiles;
 * for batched cases the percentiles are over batch means (tails look smaller).
 */
export interface MeasureSettings {
  readonly warmupMs: number;
  readonly durationMs: number;
  /** Keep sampling past durationMs until this many samples exist. */
  readonly minSamples: number;
  /** Smallest time one sample should take, ns. */
  readonly minBatchNs: number;
}

export const DEFAULT_SETTINGS: MeasureSettings = { warmupMs: 300, durationMs: 1500, minSamples: 50, minBatchNs: 20_000 };

export interface CaseResult {
  readonly id: string;
  readonly description: string;
  readonly opsPerSecond: number;
  readonly medianUs: number;
  readonly p99Us: number;
  readonly meanUs: number;
  readonly minUs: number;
  readonly samples: number;
  readonly batchSize: number;
  readonly totalOps: number;
  /**
   * Process CPU time (user + system) over wall time while sampling. About 1 when the core was
   * ours; well below 1 on a busy machine (the figures are then inflated). It can exceed 1
   * slightly because V8 collects garbage on helper threads.
   */
  readonly cpuShare: number;
}

// Results go here so that the optimiser cannot drop a call whose value is unused.
const sink: unknown[] = new Array<unknown>(16);
let sinkIndex = 0;
function consume(value: unknown): void {
  sink[(sinkIndex = (sinkIndex + 1) & 15)] = value;
}

const now = (): bigint => process.hrtime.bigint();
const NS_PER_MS = 1_000_000n;

/** Nearest-rank percentile of an ascending array (p in 0..100). */
export function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const rank = Math.ceil((p / 100) * sorted.length);
  return sorted[Math.min(sorted.length, Math.max(1, rank)) - 1] as number;
}

export function median(values: readonly number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? (sorted[mid] as number) : ((sorted[mid - 1] as number) + (sorted[mid] as number)) / 2;
}

function collectGarbage(): void {
  // Only present under `node --expose-gc`; a clean heap between cases reduces cross-talk.
  const gc = (globalThis as { gc?: () => void }).gc;
  if (gc) gc();
}

export function measure(id: string, description: string, fn: () => unknown, settings: MeasureSettings = DEFAULT_SETTINGS): CaseResult {
  collectGarbage();
  const warmupEnd = now() + BigInt(settings.warmupMs) * NS_PER_MS;
  const warmupStart = now();
  let warmupOps = 0;
  while (now() < warmupEnd) {
    consume(fn());
    warmupOps++;
  }
  const nsPerOp = Number(now() - warmupStart) / Math.max(1, warmupOps);
  const batchSize = Math.max(1, Math.ceil(settings.minBatchNs / Math.max(nsPerOp, 1)));

  const perOpNs: number[] = [];
  let totalNs = 0;
  const cpuStart = process.cpuUsage();
  const wallStart = now();
  const end = wallStart + BigInt(settings.durationMs) * NS_PER_MS;
  while (now() < end || perOpNs.length < settings.minSamples) {
    const start = now();
    for (let i = 0; i < batchSize; i++) consume(fn());
    const elapsed = Number(now() - start);
    totalNs += elapsed;
    perOpNs.push(elapsed / batchSize);
  }
  const cpu = process.cpuUsage(cpuStart);
  const cpuShare = ((cpu.user + cpu.system) * 1000) / Number(now() - wallStart);
  perOpNs.sort((a, b) => a - b);
  const totalOps = perOpNs.length * batchSize;
  return {
    id,
    description,
    opsPerSecond: totalOps / (totalNs / 1e9),
    medianUs: median(perOpNs) / 1000,
    p99Us: percentile(perOpNs, 99) / 1000,
    meanUs: totalNs / totalOps / 1000,
    minUs: (perOpNs[0] as number) / 1000,
    samples: perOpNs.length,
    batchSize,
    totalOps,
    cpuShare,
  };
}

/** Runs fn `runs` times after `warmups` untimed runs; returns each run's wall time in ms. */
export function timeRuns(fn: () => unknown, runs: number, warmups = 1): number[] {
  for (let i = 0; i < warmups; i++) consume(fn());
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    collectGarbage();
    const start = now();
    consume(fn());
    times.push(Number(now() - start) / 1e6);
  }
  return times;
}
