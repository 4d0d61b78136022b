import { type ChildProcess, spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';

import { freePort } from '@registry/data';

const ROOT = resolve(__dirname, '..', '..', '..');
/** The built service: `npm start` runs the same file (build first: `npm run build`; `npm test` does). */
export const SERVICE_MAIN = join(ROOT, 'dist', 'apps', 'api', 'src', 'main.js');

export interface ServiceProcess {
  readonly child: ChildProcess;
  readonly port: number;
  readonly baseUrl: string;
  /** The last lines the process wrote to stderr, for failure messages. */
  stderr(): string;
  /** Resolves with the exit code (or the signal's name) once the process has gone. */
  exited(): Promise<number | string | null>;
  /** SIGKILL: no shutdown hook runs, in-flight requests are cut off. */
  kill(): Promise<number | string | null>;
}

export interface ServiceProcessOptions {
  /** The service's (runtime role's) connection. */
  readonly databaseUrl: string;
  /** The owner's connection, for the migration check at start-up. */
  readonly migrationUrl: string;
  readonly env?: Record<string, string>;
  readonly readyTimeoutMs?: number;
}

/**
 * Starts the built service as its own process on an existing database (no
 * embedded server), as production runs it, and waits until `/health/ready`
 * answers 200. Scheduler and delivery worker stay off unless `env` turns them on.
 */
export async function startServiceProcess(options: ServiceProcessOptions): Promise<ServiceProcess> {
  if (!existsSync(SERVICE_MAIN)) throw new Error(`${SERVICE_MAIN} is missing: run "npm run build" (npm test does it first).`);
  const port = await freePort();
  const child = spawn(process.execPath, [SERVICE_MAIN], {
    cwd: ROOT,
    env: {
      PATH: process.env.PATH,
      TZ: 'UTC',
      MALLOC_ARENA_MAX: '2',
      NODE_ENV: 'test',
      LOG_LEVEL: 'warn',
      PORT: String(port),
      DATABASE_URL: options.databaseUrl,
      DATABASE_MIGRATION_URL: options.migrationUrl,
      ...options.env,
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  const tail: string[] = [];
  child.stderr?.on('data', (chunk: Buffer) => {
    tail.push(chunk.toString('utf8'));
    if (tail.length > 40) tail.shift();
  });
  const exit = new Promise<number | string | null>((done) => child.once('exit', (code, signal) => done(code ?? signal)));
  const service: ServiceProcess = {
    child,
    port,
    baseUrl: `http://127.0.0.1:${port}`,
    stderr: () => tail.join(''),
    exited: () => exit,
    kill: () => {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
      return exit;
    },
  };
  const deadline = Date.now() + (options.readyTimeoutMs ?? 30_000);
  let gone = false;
  void exit.then(() => (gone = true));
  while (!gone && Date.now() < deadline) {
    try {
      const res = await fetch(`${service.baseUrl}/health/ready`);
      if (res.status === 200) return service;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  await service.kill();
  throw new Error(`the service did not become ready (${gone ? 'it exited' : 'timed out'}): ${service.stderr()}`);
}

/** The outcome of one HTTP call: a status and body, or the network error that cut it off. */
export type CallOutcome =
  | { readonly ok: true; readonly status: number; readonly body: Record<string, unknown>; readonly etag: string | null }
  | { readonly ok: false; readonly error: string };

/** One JSON call with fetch; a refused or cut connection is an outcome, not a throw. */
export async function call(
  baseUrl: string,
  method: string,
  path: string,
  headers: Record<string, string>,
  body?: unknown,
  timeoutMs = 15_000,
): Promise<CallOutcome> {
  try {
    const res = await fetch(`${baseUrl}${path}`, {
      method,
      headers: { ...headers, ...(body === undefined ? {} : { 'content-type': 'application/json' }) },
      ...(body === undefined ? {} : { body: JSON.stringify(body) }),
      signal: AbortSignal.timeout(timeoutMs),
    });
    const text = await res.text();
    let parsed: Record<string, unknown> = {};
    try {
      parsed = text ? (JSON.parse(text) as Record<string, unknown>) : {};
    } catch {
      parsed = { text };
    }
    return { ok: true, status: res.status, body: parsed, etag: res.headers.get('etag') };
  } catch (err) {
    return { ok: false, error: String((err as Error)?.cause ?? (err as Error)?.message ?? err) };
  }
}

/** Milliseconds from `since` until `/health/ready` answers 200 (polled every 100 ms), or null if not within `limitMs`. */
export async function readyAfter(baseUrl: string, since: number, limitMs = 15_000): Promise<number | null> {
  while (Date.now() - since < limitMs) {
    const res = await call(baseUrl, 'GET', '/health/ready', {});
    if (res.ok && res.status === 200) return Date.now() - since;
    await new Promise((r) => setTimeout(r, 100));
  }
  return null;
}
