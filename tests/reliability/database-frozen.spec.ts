import 'reflect-metadata';

import { randomUUID } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import { createDatabase, type Database, type DatabaseServer, freePort, openDatabaseServer } from '@registry/data';

import { verifyChain } from '../../apps/api/src/audit-trail/chain-verifier';
import { toProblem } from '../../apps/api/src/common/problem/to-problem';
import { parseConfig } from '../../apps/api/src/config/config.schema';
import { seedCast, seedCredential, seedFactor, seedVessel } from '../support/factories';
import { expectServesAgain } from './support/serves-again';
import { listeningApp } from './support/listening-app';
import { readyAfter } from './support/service-process';

/**
 * The database freezes instead of going away: every process of a dedicated embedded cluster is
 * stopped with SIGSTOP, so connections stay open and nothing answers (as in a network partition
 * that keeps TCP up). Requests already on open pooled connections, a transaction in the middle of
 * its work and new requests must all end within the statement bound (DB_QUERY_TIMEOUT_MS) plus
 * the connect timeout, as 503 problems; readiness says not ready, liveness stays up. After SIGCONT
 * the same application serves again by itself, and every write answered 503 is wholly there with
 * its audit entry or wholly absent.
 */
const QUERY_TIMEOUT_MS = 1_500;
const CONNECT_TIMEOUT_MS = 3_000;
/** A request waits for a connection at most once and for one statement at most once; the rest is slack for a busy CI machine. */
const BOUND_MS = QUERY_TIMEOUT_MS + CONNECT_TIMEOUT_MS + 2_000;
const FROZEN_MS = BOUND_MS + 1_000;
const PHASE_MS = 1_500;
const CLIENTS = 6;

interface Outcome {
  readonly phase: 'up' | 'frozen' | 'back';
  readonly route: string;
  readonly startedAt: number;
  readonly ms: number;
  readonly status: number | string;
  readonly code?: unknown;
  readonly contentType?: string | null;
  readonly requestId?: string;
}

/**
 * The postmaster of the cluster in `clusterDir` and every process it started (pids), read from /proc
 * (Linux, where the test runs). Synchronous on purpose: nothing else runs between reading and stopping.
 */
function clusterProcesses(clusterDir: string): number[] {
  const postmaster = Number.parseInt(readFileSync(join(clusterDir, 'postmaster.pid'), 'utf8').split('\n')[0] ?? '', 10);
  if (!Number.isInteger(postmaster) || postmaster <= 0) throw new Error(`no postmaster pid in ${clusterDir}`);
  const children = readdirSync('/proc')
    .filter((entry) => /^\d+$/.test(entry))
    .filter((entry) => {
      let stat = '';
      try {
        stat = readFileSync(join('/proc', entry, 'stat'), 'utf8');
      } catch {
        return false; // gone meanwhile
      }
      // pid (comm) state ppid …: comm may hold spaces and parentheses, so read after its closing one.
      return Number.parseInt(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1] ?? '', 10) === postmaster;
    })
    .map(Number);
  return [postmaster, ...children];
}

/** The state letter of a process (T = stopped), or null once it is gone. */
function processState(pid: number): string | null {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    return stat.slice(stat.lastIndexOf(')') + 2, stat.lastIndexOf(')') + 3);
  } catch {
    return null;
  }
}

/** Waits until every process is stopped (SIGSTOP is delivered asynchronously); fails the test plainly if one is not. */
async function allStopped(pids: readonly number[]): Promise<void> {
  const deadline = Date.now() + 2_000;
  for (;;) {
    const running = pids.filter((pid) => !['T', 't', null].includes(processState(pid)));
    if (running.length === 0) return;
    if (Date.now() > deadline) throw new Error(`the cluster did not stop: ${running.map((p) => `${p}=${processState(p)}`).join(', ')}`);
    await new Promise((r) => setTimeout(r, 5));
  }
}

function signal(pids: readonly number[], sig: NodeJS.Signals): void {
  for (const pid of pids) {
    try {
      process.kill(pid, sig);
    } catch {
      // Already gone.
    }
  }
}

describe('when the database freezes (accepts, never answers) under load and thaws', () => {
  let folder: string;
  let server: DatabaseServer;
  let owner: Database;
  let database: Database;
  let app: NestFastifyApplication;
  let baseUrl: string;
  /** Every process stopped so far, so that afterAll can always continue them. */
  const stopped = new Set<number>();
  const timeouts: string[] = [];
  const errorLogs: Record<string, unknown>[] = [];

  beforeAll(async () => {
    folder = await mkdtemp(join(tmpdir(), 'registry-frozen-'));
    server = await openDatabaseServer({ dataDir: join(folder, 'cluster'), embeddedPort: await freePort() });
    owner = createDatabase({ databaseUrl: server.ownerUrl, poolMax: 2 });
    const config = parseConfig({
      NODE_ENV: 'test',
      LOG_LEVEL: 'error',
      DATABASE_URL: server.url,
      DB_QUERY_TIMEOUT_MS: String(QUERY_TIMEOUT_MS),
      DB_CONNECT_TIMEOUT_MS: String(CONNECT_TIMEOUT_MS),
      IDEMPOTENCY_WAIT_SECONDS: '1',
    });
    // As main.ts builds it.
    database = createDatabase({
      databaseUrl: server.url,
      poolMax: 5,
      connectionTimeoutMs: config.database.connectTimeoutMs,
      queryTimeoutMs: config.database.queryTimeoutMs,
      onPoolError: () => undefined,
      onQueryTimeout: (err) => timeouts.push(err.message),
    });
    ({ app, baseUrl } = await listeningApp(config, database, errorLogs));
  }, 60_000);

  afterAll(async () => {
    // Thaw first, whatever happened: a stopped server cannot be stopped cleanly.
    signal([...stopped], 'SIGCONT');
    await app?.close();
    await database?.close();
    await owner?.close();
    await server?.embedded?.stop();
    await rm(folder, { recursive: true, force: true });
  }, 30_000);

  it('ends every request within the bound as a 503 problem while frozen, and serves again after the thaw', async () => {
    const prisma = owner.prisma;
    const cast = await seedCast(prisma);
    const vessels = await Promise.all(Array.from({ length: CLIENTS + 1 }, () => seedVessel(prisma, cast.lab.id)));
    const held = vessels.pop()!;
    const factor = await seedFactor(prisma, { labId: cast.lab.id, personId: cast.people.analyst.id, vesselId: vessels[0]!.id });
    const { key } = await seedCredential(prisma, cast.people.admin.id, ['factors:read']);
    const manager = { authorization: `Bearer ${cast.tokens.manager}` };
    const service = { authorization: `Bearer ${key}` };
    const auditCount = (entityId: string) => prisma.auditEntry.count({ where: { entityId } });
    const before = await Promise.all(vessels.map(async (v) => ({ version: v.version, audits: await auditCount(v.id) })));

    const outcomes: Outcome[] = [];
    const state = { phase: 'up' as Outcome['phase'], stop: false };
    const timed = async (route: string, method: string, path: string, headers: Record<string, string>, body?: unknown) => {
      const phase = state.phase;
      const requestId = randomUUID();
      const startedAt = Date.now();
      const res = await fetch(`${baseUrl}${path}`, {
        method,
        headers: { ...headers, 'x-request-id': requestId, ...(body ? { 'content-type': 'application/json' } : {}) },
        ...(body ? { body: JSON.stringify(body) } : {}),
        signal: AbortSignal.timeout(20_000),
      }).catch((err: Error) => err);
      const ms = Date.now() - startedAt;
      if (res instanceof Error) {
        outcomes.push({ phase, route, startedAt, ms, status: String(res.cause ?? res.message), requestId });
        return null;
      }
      const text = await res.text();
      const parsed = text ? (JSON.parse(text) as Record<string, unknown>) : {};
      const contentType = res.headers.get('content-type');
      outcomes.push({ phase, route, startedAt, ms, status: res.status, code: parsed.code, contentType, requestId });
      return { status: res.status, etag: res.headers.get('etag') };
    };
    // Each client reads and changes its own vessel (a transaction with its audit entry) and asks for the factor (plain pool queries).
    const clients = vessels.map(async (vessel, i) => {
      for (let n = 0; !state.stop; n++) {
        const read = await timed('GET /v1/vessels/:id', 'GET', `/v1/vessels/${vessel.id}`, manager);
        if (read?.status === 200) {
          const headers = { ...manager, 'if-match': read.etag ?? '' };
          await timed('PATCH /v1/vessels/:id', 'PATCH', `/v1/vessels/${vessel.id}`, headers, { notes: `Shelf ${i}.${n}` });
        }
        const factorPath = `/v1/factors/current?personId=${cast.people.analyst.id}&vesselId=${vessels[0]!.id}`;
        await timed('GET /v1/factors/current', 'GET', factorPath, service);
        if (state.phase === 'frozen') await new Promise((r) => setTimeout(r, 50));
      }
    });
    await new Promise((r) => setTimeout(r, PHASE_MS));

    // An interactive transaction that has done some work when the server freezes, and then sends a write.
    let freeze!: () => void;
    const frozen = new Promise<void>((resolve) => (freeze = resolve));
    let txEndedAfterMs = -1;
    const transaction = database.prisma
      .$transaction(
        async (tx) => {
          await tx.$queryRaw`SELECT 1`;
          await frozen;
          const sent = Date.now();
          try {
            await tx.vessel.update({ where: { id: held.id }, data: { notes: 'Written by a transaction cut off by the freeze' } });
          } finally {
            txEndedAfterMs = Date.now() - sent;
          }
        },
        { maxWait: 5_000, timeout: 30_000 },
      )
      .then(
        () => null,
        (err: unknown) => err,
      );
    await new Promise((r) => setTimeout(r, 100));

    // Freeze: the postmaster first (it then starts nothing new), then everything it started.
    let removed = 0;
    database.pool.on('remove', () => removed++);
    const freezeAt = Date.now();
    state.phase = 'frozen';
    const { clusterDir } = server.embedded!;
    for (let round = 0; round < 2; round++) {
      const pids = clusterProcesses(clusterDir);
      for (const pid of pids) stopped.add(pid);
      signal(pids, 'SIGSTOP');
    }
    await allStopped([...stopped]);
    freeze();
    // A transaction begun while frozen (Prisma's default maxWait of 2 s, shorter than the connect timeout).
    const startedFrozen = Date.now();
    const lateTransaction = database.prisma
      .$transaction((tx) => tx.$queryRaw`SELECT 1`)
      .then(
        () => ({ err: null as unknown, ms: Date.now() - startedFrozen }),
        (err: unknown) => ({ err, ms: Date.now() - startedFrozen }),
      );
    const probes: { ready: Outcome | undefined; live: Outcome[] }[] = [];
    while (Date.now() - freezeAt < FROZEN_MS) {
      const live = timed('GET /health/live', 'GET', '/health/live', {});
      await timed('GET /health/ready', 'GET', '/health/ready', {});
      const ready = outcomes.at(-1);
      await live;
      probes.push({ ready, live: outcomes.filter((o) => o.route === 'GET /health/live' && o.phase === 'frozen') });
    }

    const removedWhileFrozen = removed;
    signal([...stopped], 'SIGCONT');
    const thawAt = Date.now();
    const readyAfterMs = await readyAfter(baseUrl, thawAt);
    state.phase = 'back';
    await new Promise((r) => setTimeout(r, PHASE_MS));
    state.stop = true;
    await Promise.all(clients);
    const txError = await transaction;
    const late = await lateTransaction;

    const frozenOnes = outcomes.filter((o) => o.phase === 'frozen' || (o.phase === 'up' && o.startedAt + o.ms >= freezeAt));
    const slowest = Math.max(...frozenOnes.map((o) => o.ms));
    console.log(
      `frozen: ${outcomes.length} requests (${frozenOnes.length} met the freeze, ${frozenOnes.filter((o) => o.status === 503).length} answered 503); ` +
        `slowest ${slowest} ms; transaction ended ${txEndedAfterMs} ms after its write (${String(txError)}); ` +
        `transaction begun while frozen ended after ${late.ms} ms (${String(late.err)}); ` +
        `${timeouts.length} statements timed out, ${removedWhileFrozen} connections left the pool while frozen; ` +
        `ready again ${readyAfterMs} ms after SIGCONT`,
    );

    // Never a hang, never a 500, nothing logged as our own bug.
    expect(errorLogs.filter((l) => l.msg === 'unexpected error')).toEqual([]);
    expect(outcomes.filter((o) => o.status !== 200 && o.status !== 503)).toEqual([]);
    // While frozen: every answer within the bound; every refusal a 503 problem.
    expect(frozenOnes.filter((o) => o.ms > BOUND_MS)).toEqual([]);
    const refused = frozenOnes.filter((o) => o.status === 503);
    expect(refused.length).toBeGreaterThan(frozenOnes.length / 2);
    expect(new Set(refused.map((o) => o.route))).toEqual(
      new Set([
        'GET /v1/vessels/:id',
        'GET /v1/factors/current',
        'GET /health/ready',
        ...(refused.some((o) => o.route.startsWith('PATCH')) ? ['PATCH /v1/vessels/:id'] : []),
      ]),
    );
    for (const o of refused) {
      expect({ route: o.route, code: o.code, type: o.contentType }).toEqual({
        route: o.route,
        code: 'service-unavailable',
        type: expect.stringMatching(/^application\/problem\+json/),
      });
    }
    // The statement bound is what ended the requests already on open connections, and each such connection left the pool.
    expect(timeouts.length).toBeGreaterThan(0);
    expect(removedWhileFrozen).toBeGreaterThanOrEqual(timeouts.length);
    // The transaction ended by the bound, as a 503, and its write never landed.
    expect(txEndedAfterMs).toBeGreaterThanOrEqual(QUERY_TIMEOUT_MS - 50);
    expect(txEndedAfterMs).toBeLessThan(QUERY_TIMEOUT_MS + 1_500);
    expect(txError).toBeInstanceOf(Error);
    expect(toProblem(txError, {}).problem).toMatchObject({ status: 503, code: 'service-unavailable' });
    expect(late.ms).toBeLessThan(BOUND_MS);
    expect(toProblem(late.err, {}).problem).toMatchObject({ status: 503, code: 'service-unavailable' });
    // Readiness down, liveness up, throughout.
    expect(probes.length).toBeGreaterThanOrEqual(3);
    expect(new Set(probes.map((p) => p.ready?.status))).toEqual(new Set([503]));
    expect(new Set(probes.flatMap((p) => p.live.map((o) => o.status)))).toEqual(new Set([200]));

    // Thawed: ready again without a restart, and everything succeeds.
    expect(readyAfterMs).not.toBeNull();
    const back = outcomes.filter((o) => o.phase === 'back');
    expect(back.length).toBeGreaterThan(0);
    expect(new Set(back.map((o) => o.status))).toEqual(new Set([200]));

    // Nothing half-written: a PATCH answered 200 has its audit entry; one answered 503 has one or none,
    // and each vessel moved on by exactly as many versions as it has new audit entries.
    for (const o of outcomes.filter((x) => x.route === 'PATCH /v1/vessels/:id')) {
      const entries = await prisma.auditEntry.count({ where: { requestId: o.requestId! } });
      if (o.status === 200) expect({ requestId: o.requestId, entries }).toEqual({ requestId: o.requestId, entries: 1 });
      else expect([0, 1]).toContain(entries);
    }
    for (const [i, vessel] of vessels.entries()) {
      const row = await prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } });
      expect({ vessel: i, moved: row.version - before[i]!.version }).toEqual({
        vessel: i,
        moved: (await auditCount(vessel.id)) - before[i]!.audits,
      });
    }
    expect((await prisma.vessel.findUniqueOrThrow({ where: { id: held.id } })).notes).toBe(held.notes);
    expect(await verifyChain(owner.pool)).toMatchObject({ intact: true, firstBroken: null });

    // A write after the thaw, with its audit entry; the factor answers as before.
    await expectServesAgain({
      baseUrl,
      prisma,
      manager,
      service,
      vesselId: vessels[1]!.id,
      factor: { id: factor.id, personId: cast.people.analyst.id, vesselId: vessels[0]!.id },
      notes: 'After the thaw',
    });
  }, 60_000);
});
