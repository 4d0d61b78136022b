import { type ChildProcess, spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { createInterface } from 'node:readline';

import autocannon from 'autocannon';

/** Load of one endpoint: requests built per request from a random pick. */
export interface LoadTarget {
  readonly id: string;
  readonly description: string;
  readonly url: string;
  readonly method: 'GET' | 'POST';
  readonly headers: Record<string, string>;
  /** Path (and body, and headers replacing `headers`) of the next request. */
  readonly next: () => { path: string; body?: string; headers?: Record<string, string> };
}

export interface LoadResult {
  readonly id: string;
  readonly description: string;
  readonly requestsPerSecond: number;
  readonly latencyMs: { readonly p50: number; readonly p90: number; readonly p99: number; readonly max: number; readonly mean: number };
  readonly requests: number;
  readonly errors: number;
  readonly timeouts: number;
  readonly non2xx: number;
  readonly statusCodes: Record<string, number>;
  /** CPU time (user + system) the server process spent per request, µs; null where /proc is unavailable. */
  readonly serverCpuUsPerRequest: number | null;
}

/** CPU time of a process so far, ms (Linux /proc; null elsewhere). */
function processCpuMs(pid: number | undefined): number | null {
  if (pid === undefined) return null;
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.split(' ') ?? [];
    const ticks = Number(fields[11]) + Number(fields[12]);
    return Number.isFinite(ticks) ? ticks * 10 : null;
  } catch {
    return null;
  }
}

/** Resident set size of a process now and its high-water mark, MB (Linux /proc; null elsewhere). */
export function memoryOf(pid: number | undefined): { rssMb: number; hwmMb: number } | null {
  if (pid === undefined) return null;
  try {
    const status = readFileSync(`/proc/${pid}/status`, 'utf8');
    const kb = (field: string) => Number(new RegExp(`^${field}:\\s+(\\d+) kB`, 'm').exec(status)?.[1] ?? NaN);
    return { rssMb: kb('VmRSS') / 1024, hwmMb: kb('VmHWM') / 1024 };
  } catch {
    return null;
  }
}

/** Drives `target` for `durationS`; `serverPid` is the process whose CPU time is counted. */
export async function load(target: LoadTarget, connections: number, durationS: number, serverPid?: number): Promise<LoadResult> {
  const cpuBefore = processCpuMs(serverPid);
  const result = await autocannon({
    url: target.url,
    connections,
    duration: durationS,
    timeout: 10,
    requests: [
      {
        method: target.method,
        headers: target.headers,
        setupRequest: (request) => ({ ...request, ...target.next() }),
      },
    ],
  });
  const cpuAfter = processCpuMs(serverPid);
  return {
    id: target.id,
    description: target.description,
    requestsPerSecond: result.requests.total / (result.duration || durationS),
    latencyMs: {
      p50: result.latency.p50,
      p90: result.latency.p90,
      p99: result.latency.p99,
      max: result.latency.max,
      mean: result.latency.mean,
    },
    requests: result.requests.total,
    errors: result.errors,
    timeouts: result.timeouts,
    non2xx: result.non2xx,
    statusCodes: Object.fromEntries(Object.entries(result.statusCodeStats ?? {}).map(([code, s]) => [code, s.count])),
    serverCpuUsPerRequest:
      cpuBefore === null || cpuAfter === null || result.requests.total === 0
        ? null
        : (1000 * (cpuAfter - cpuBefore)) / result.requests.total,
  };
}

/**
 * Requests sent at evenly spaced instants (`ratePerS`), each on its own, whatever the answers
 * do: the load a steady stream of users makes. Latency runs from the instant a request was due,
 * so a backlog shows in it (no coordinated omission). (autocannon's own rate limit sends each
 * second's requests together: a burst.)
 */
export async function openLoop(target: LoadTarget, ratePerS: number, durationS: number, serverPid?: number): Promise<LoadResult> {
  const cpuBefore = processCpuMs(serverPid);
  const intervalMs = 1000 / ratePerS;
  const total = Math.round(ratePerS * durationS);
  const latencies: number[] = [];
  const statusCodes: Record<string, number> = {};
  let errors = 0;
  const started = performance.now();
  const inFlight: Promise<void>[] = [];
  for (let i = 0; i < total; i++) {
    const due = started + i * intervalMs;
    const wait = due - performance.now();
    if (wait > 0) await new Promise((r) => setTimeout(r, wait));
    const { path, body, headers } = target.next();
    inFlight.push(
      fetch(`${target.url}${path}`, { method: target.method, headers: headers ?? target.headers, ...(body === undefined ? {} : { body }) })
        .then(async (res) => {
          await res.arrayBuffer();
          statusCodes[String(res.status)] = (statusCodes[String(res.status)] ?? 0) + 1;
          latencies.push(performance.now() - due);
        })
        .catch(() => {
          errors++;
        }),
    );
  }
  await Promise.all(inFlight);
  const elapsedS = (performance.now() - started) / 1000;
  const cpuAfter = processCpuMs(serverPid);
  const sorted = [...latencies].sort((a, b) => a - b);
  const at = (q: number) => sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)] ?? NaN;
  const ok = Object.entries(statusCodes).reduce((n, [code, c]) => n + (code.startsWith('2') ? c : 0), 0);
  return {
    id: target.id,
    description: `${target.description}, ${ratePerS} a second at even intervals`,
    requestsPerSecond: latencies.length / elapsedS,
    latencyMs: {
      p50: at(0.5),
      p90: at(0.9),
      p99: at(0.99),
      max: sorted.at(-1) ?? NaN,
      mean: sorted.reduce((a, b) => a + b, 0) / (sorted.length || 1),
    },
    requests: latencies.length + errors,
    errors,
    timeouts: 0,
    non2xx: latencies.length - ok,
    statusCodes,
    serverCpuUsPerRequest:
      cpuBefore === null || cpuAfter === null || latencies.length === 0 ? null : (1000 * (cpuAfter - cpuBefore)) / latencies.length,
  };
}

/** The environment benchmarks start the service with: production, loopback only, on `db`; `extra` adds or overrides. */
export function serviceEnv(
  port: number,
  db: { readonly url: string; readonly ownerUrl: string },
  extra: Record<string, string> = {},
): Record<string, string> {
  return {
    NODE_ENV: 'production',
    LOG_LEVEL: 'warn',
    HOST: '127.0.0.1',
    PORT: String(port),
    DATABASE_URL: db.url,
    DATABASE_MIGRATION_URL: db.ownerUrl,
    ...extra,
  };
}

/**
 * How `npm start` and the Dockerfile run the service (two malloc arenas), applied to every
 * server a benchmark starts so the figures are production's.
 */
export const RUNTIME = { nodeArgs: [] as string[], env: { MALLOC_ARENA_MAX: '2' } } as const;

/**
 * A child Node process; its stderr is kept (last lines) for a failure message. Its stdout is
 * discarded unless `readStdout` (then read it, or it fills up and the child stalls).
 * BENCH_CHILD_NODE_ARGS adds Node options NODE_OPTIONS refuses, e.g. `--cpu-prof --cpu-prof-dir=/tmp/prof`
 * to profile the servers under load.
 */
export function startProcess(
  script: string,
  env: Record<string, string>,
  readStdout = false,
): { child: ChildProcess; stderr: () => string } {
  const nodeArgs = (process.env.BENCH_CHILD_NODE_ARGS ?? '').split(/\s+/).filter(Boolean);
  const child = spawn(process.execPath, [...RUNTIME.nodeArgs, ...nodeArgs, script], {
    env: { ...RUNTIME.env, ...process.env, ...env },
    stdio: ['ignore', readStdout ? 'pipe' : 'ignore', 'pipe'],
  });
  const tail: string[] = [];
  child.stderr?.on('data', (chunk: Buffer) => {
    tail.push(chunk.toString('utf8'));
    if (tail.length > 20) tail.shift();
  });
  return { child, stderr: () => tail.join('') };
}

/** The first stdout line of a child that is JSON with `port`. */
export function portFromStdout(child: ChildProcess, timeoutMs = 20_000): Promise<number> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('the child did not report its port')), timeoutMs);
    const lines = createInterface({ input: child.stdout as NodeJS.ReadableStream });
    lines.on('line', (line) => {
      try {
        const port = (JSON.parse(line) as { port?: unknown }).port;
        if (typeof port === 'number') {
          clearTimeout(timer);
          lines.close();
          child.stdout?.resume();
          resolve(port);
        }
      } catch {
        // not our line
      }
    });
    child.once('exit', (code) => reject(new Error(`the child exited (${code}) before reporting its port`)));
  });
}

/** Polls a URL until it answers 200. */
export async function waitForOk(url: string, timeoutMs = 60_000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    try {
      const res = await fetch(url);
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`${url} did not answer 200 within ${timeoutMs} ms`);
}

/** Stops a child with SIGTERM (SIGKILL after a grace period). */
export function stopProcess(child: ChildProcess, graceMs = 10_000): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => {
    const timer = setTimeout(() => child.kill('SIGKILL'), graceMs);
    child.once('exit', () => {
      clearTimeout(timer);
      resolve();
    });
    child.kill('SIGTERM');
  });
}
