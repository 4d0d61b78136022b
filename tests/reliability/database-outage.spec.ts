import 'reflect-metadata';

import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import {
  createDatabase,
  type Database,
  type DatabaseServer,
  freePort,
  openDatabaseServer,
  startEmbeddedPostgres,
  type EmbeddedServer,
} from '@registry/data';

import { CredentialCache } from '../../apps/api/src/auth/credential-cache';
import { parseConfig } from '../../apps/api/src/config/config.schema';
import { startReceiver, TEST_WEBHOOK_KEY } from '../delivery/delivery-support';
import { seedCast, seedCheckWeight, seedCredential, seedFactor, seedVessel } from '../support/factories';
import { expectServesAgain } from './support/serves-again';
import { listeningApp } from './support/listening-app';
import { call, type CallOutcome, readyAfter } from './support/service-process';

/**
 * The database goes away under load and comes back (a dedicated embedded PostgreSQL
 * cluster, stopped and started again on the same port): while it is down requests fail
 * fast with a 503 problem and Retry-After, readiness says not ready and liveness stays
 * up; afterwards the same application serves again without a restart, and its scheduler
 * and credential listener carry on by themselves.
 * `npm run test:faults` runs a longer outage and more clients (RELIABILITY_LONG=1).
 */
const LONG = process.env.RELIABILITY_LONG === '1';
const DOWN_MS = LONG ? 15_000 : 3_000;
const PHASE_MS = LONG ? 5_000 : 1_500;
const CLIENTS = LONG ? 16 : 6;
/** Fail fast: no request waits longer than this while the database is away (ms). */
const FAST_MS = 3_000;

interface Outcome {
  readonly phase: 'up' | 'down' | 'back';
  readonly route: string;
  readonly ms: number;
  readonly endedAt: number;
  readonly result: CallOutcome;
  readonly contentType?: string | null;
  readonly retryAfter?: string | null;
}

describe('when the database goes away under load and comes back', () => {
  let folder: string;
  let server: DatabaseServer;
  let restarted: EmbeddedServer | null = null;
  let owner: Database;
  let database: Database;
  let app: NestFastifyApplication;
  let baseUrl: string;
  let receiver: Awaited<ReturnType<typeof startReceiver>>;
  /** What the app logged at level error: a failure it took for a bug of its own would show here. */
  const errorLogs: Record<string, unknown>[] = [];

  beforeAll(async () => {
    folder = await mkdtemp(join(tmpdir(), 'registry-outage-'));
    receiver = await startReceiver([200]);
    server = await openDatabaseServer({ dataDir: join(folder, 'cluster'), embeddedPort: await freePort() });
    owner = createDatabase({ databaseUrl: server.ownerUrl, poolMax: 2 });
    const config = parseConfig({
      NODE_ENV: 'test',
      LOG_LEVEL: 'error',
      DATABASE_URL: server.url,
      SCHEDULER_ENABLED: 'true',
      SCHEDULER_PERIOD_SECONDS: '5',
      DELIVERY_WORKER_PERIOD_MS: '250',
      WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY,
      WEBHOOK_PRIVATE_TARGETS: 'allow',
    });
    // As main.ts builds it: the configured pool size and connect timeout, idle-connection errors only logged.
    database = createDatabase({
      databaseUrl: server.url,
      poolMax: 5,
      connectionTimeoutMs: config.database.connectTimeoutMs,
      queryTimeoutMs: config.database.queryTimeoutMs,
      onPoolError: () => undefined,
    });
    ({ app, baseUrl } = await listeningApp(config, database, errorLogs));
  }, 60_000);

  afterAll(async () => {
    await app?.close();
    await database?.close();
    await owner?.close();
    await (restarted ?? server.embedded)?.stop();
    await receiver?.close();
    await rm(folder, { recursive: true, force: true });
  });

  it(
    'answers 503 problems fast while it is down, reports not ready, stays live, and recovers without a restart',
    async () => {
      const prisma = owner.prisma;
      const cast = await seedCast(prisma);
      const vessels = await Promise.all(Array.from({ length: CLIENTS }, () => seedVessel(prisma, cast.lab.id)));
      const factor = await seedFactor(prisma, { labId: cast.lab.id, personId: cast.people.analyst.id, vesselId: vessels[0]!.id });
      const { key } = await seedCredential(prisma, cast.people.admin.id, ['factors:read']);
      const manager = { authorization: `Bearer ${cast.tokens.manager}` };
      const service = { authorization: `Bearer ${key}` };
      // A webhook for overdue notices: the delivery worker must still send after the outage.
      const hook = await call(baseUrl, 'POST', `/v1/labs/${cast.lab.id}/webhooks`, manager, { url: receiver.url, eventKinds: ['overdue'] });
      expect(hook.ok && hook.status).toBe(201);

      const outcomes: Outcome[] = [];
      const state = { phase: 'up' as Outcome['phase'], stop: false };
      const timed = async (route: string, method: string, path: string, headers: Record<string, string>, body?: unknown) => {
        const phase = state.phase;
        const started = Date.now();
        const res = await fetch(`${baseUrl}${path}`, {
          method,
          headers: { ...headers, ...(body ? { 'content-type': 'application/json' } : {}) },
          ...(body ? { body: JSON.stringify(body) } : {}),
          signal: AbortSignal.timeout(20_000),
        }).catch((err: Error) => err);
        const endedAt = Date.now();
        const ms = endedAt - started;
        if (res instanceof Error) {
          outcomes.push({ phase, route, ms, endedAt, result: { ok: false, error: String(res.cause ?? res.message) } });
          return null;
        }
        const text = await res.text();
        const parsed = text ? (JSON.parse(text) as Record<string, unknown>) : {};
        outcomes.push({
          phase,
          route,
          ms,
          endedAt,
          result: { ok: true, status: res.status, body: parsed, etag: res.headers.get('etag') },
          contentType: res.headers.get('content-type'),
          retryAfter: res.headers.get('retry-after'),
        });
        return { status: res.status, etag: res.headers.get('etag') };
      };
      // Each client reads and changes its own vessel and asks for the factor, over and over.
      const clients = vessels.map(async (vessel, i) => {
        for (let n = 0; !state.stop; n++) {
          const read = await timed('GET /v1/vessels/:id', 'GET', `/v1/vessels/${vessel.id}`, manager);
          if (read?.status === 200) {
            await timed(
              'PATCH /v1/vessels/:id',
              'PATCH',
              `/v1/vessels/${vessel.id}`,
              { ...manager, 'if-match': read.etag ?? '' },
              { notes: `Shelf ${i}.${n}` },
            );
          }
          await timed(
            'GET /v1/factors/current',
            'GET',
            `/v1/factors/current?personId=${cast.people.analyst.id}&vesselId=${vessels[0]!.id}`,
            service,
          );
          // A little pause keeps the down phase from spinning on instant refusals.
          if (state.phase === 'down') await new Promise((r) => setTimeout(r, 50));
        }
      });

      await new Promise((r) => setTimeout(r, PHASE_MS));
      // A connection checked out of the pool and idle between statements when the server goes (as an open
      // transaction or a paused export holds one): its error must not go unhandled and take the process down.
      const held = await database.pool.connect();
      state.phase = 'down';
      const stopAt = Date.now();
      await server.embedded!.stop();
      const downSince = Date.now();
      const probes: { ready: Outcome | undefined; live: Outcome | undefined }[] = [];
      while (Date.now() - downSince < DOWN_MS) {
        await timed('GET /health/ready', 'GET', '/health/ready', {});
        const ready = outcomes.at(-1);
        await timed('GET /health/live', 'GET', '/health/live', {});
        probes.push({ ready, live: outcomes.at(-1) });
        await new Promise((r) => setTimeout(r, 250));
      }

      await expect(held.query('SELECT 1')).rejects.toThrow();
      held.release(true);

      restarted = await startEmbeddedPostgres({ dataDir: join(folder, 'cluster'), database: 'registry', port: server.embedded!.port });
      const backSince = Date.now();
      const readyAfterMs = await readyAfter(baseUrl, backSince);
      state.phase = 'back';
      await new Promise((r) => setTimeout(r, PHASE_MS));
      state.stop = true;
      await Promise.all(clients);

      const byPhase = (phase: Outcome['phase']) => outcomes.filter((o) => o.phase === phase);
      const statuses = (list: Outcome[]) => list.map((o) => (o.result.ok ? o.result.status : o.result.error));
      console.log(
        `outage: ${outcomes.length} requests (up ${byPhase('up').length}, down ${byPhase('down').length}, back ${byPhase('back').length}); ` +
          `ready again ${readyAfterMs} ms after the restart; slowest while down ${Math.max(...byPhase('down').map((o) => o.ms))} ms`,
      );

      // Never a dropped connection, never a 500: every request got an answer, and none was logged as our own bug.
      expect(errorLogs.filter((l) => l.msg === 'unexpected error')).toEqual([]);
      expect(
        outcomes.filter((o) => !o.result.ok || o.result.status >= 500).filter((o) => !(o.result.ok && o.result.status === 503)),
      ).toEqual([]);
      // Before and after: everything succeeds (a request still running when the server stopped may have got its 503).
      const before = byPhase('up').filter((o) => o.endedAt < stopAt);
      for (const list of [before, byPhase('back')]) {
        expect(list.length).toBeGreaterThan(0);
        expect(new Set(statuses(list))).toEqual(new Set([200]));
      }
      const cutShort = byPhase('up').filter((o) => o.endedAt >= stopAt);
      expect(cutShort.every((o) => o.result.ok && [200, 503].includes(o.result.status))).toBe(true);
      // While down: fast 503 problems with Retry-After, each route.
      const down = byPhase('down').filter((o) => o.route !== 'GET /health/live');
      expect(new Set(down.map((o) => o.route))).toEqual(
        new Set([
          'GET /v1/vessels/:id',
          'GET /v1/factors/current',
          'GET /health/ready',
          ...(down.some((o) => o.route.startsWith('PATCH')) ? ['PATCH /v1/vessels/:id'] : []),
        ]),
      );
      const failed = down.filter((o) => o.result.ok && o.result.status !== 200);
      expect(failed.length).toBeGreaterThan(down.length / 2);
      for (const o of failed) {
        expect({ route: o.route, status: o.result.ok && o.result.status, code: o.result.ok && o.result.body.code }).toEqual({
          route: o.route,
          status: 503,
          code: 'service-unavailable',
        });
        expect(o.contentType).toMatch(/^application\/problem\+json/);
        expect(o.retryAfter).toMatch(/^\d+$/);
      }
      expect(Math.max(...byPhase('down').map((o) => o.ms))).toBeLessThan(FAST_MS);
      // Readiness down, liveness up, throughout.
      expect(probes.length).toBeGreaterThan(3);
      expect(new Set(probes.map((p) => p.ready?.result.ok && p.ready.result.status))).toEqual(new Set([503]));
      expect(new Set(probes.map((p) => p.live?.result.ok && p.live.result.status))).toEqual(new Set([200]));
      expect(readyAfterMs).not.toBeNull();

      // Writes succeed again, with their audit entries; the factor answers as before.
      await expectServesAgain({
        baseUrl,
        prisma,
        manager,
        service,
        vesselId: vessels[1]!.id,
        factor: { id: factor.id, personId: cast.people.analyst.id, vesselId: vessels[0]!.id },
        notes: 'After the outage',
      });

      // The background work carries on by itself: the scheduler's own timer raises a notice for an
      // item that fell due after the outage, the delivery worker sends it, and the credential listener is back.
      const weight = await seedCheckWeight(prisma, cast.lab.id, { certificateDue: new Date('2020-01-01T00:00:00Z') });
      const cache = app.get(CredentialCache);
      const deadline = Date.now() + 15_000;
      const sent = () => receiver.received.filter((r) => r.body.includes(weight.id)).length;
      let notices = 0;
      while (Date.now() < deadline && (notices === 0 || sent() === 0 || !cache.active)) {
        await new Promise((r) => setTimeout(r, 250));
        notices = await prisma.notice.count({ where: { subjectId: weight.id } });
      }
      expect({ notices, delivered: sent(), listening: cache.active }).toEqual({ notices: 1, delivered: 1, listening: true });
    },
    LONG ? 300_000 : 60_000,
  );
});
