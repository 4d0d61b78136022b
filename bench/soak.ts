/**
 * Soak run: `npm run soak`.
 *
 * Seeds a fresh registry (SOAK_SIZE, default S: 1,000 vessels, 10,000 calibrations; an embedded
 * server in a temporary folder, or a new database on DATABASE_URL, dropped afterwards), starts the
 * built service (dist/apps/api/src/main.js, as `npm start` runs it: MALLOC_ARENA_MAX=2, scheduler
 * and delivery worker off) on loopback, and drives mixed traffic at SOAK_CONNECTIONS clients (64,
 * the benchmark's) for SOAK_DURATION_S (300) or SOAK_MAX_REQUESTS (1,000,000), whichever ends
 * first: factor lookups and corrections with the seed's service credential, vessel pages by
 * managers, and calibrations created and submitted by analysts and approved by a manager of the
 * lab with If-Match (bench/soak/driver.ts). The service's RSS is sampled every second, and its
 * JavaScript heap in use (from /metrics) beside it.
 *
 * Afterwards, by SQL (bench/soak/invariants.ts): one current factor per person and vessel, each
 * factor's person and vessel its calibration's, the audit chain intact, and the rows written
 * during the run equal to the writes acknowledged — calibrations created, submitted, approved,
 * factors issued, one audit entry each.
 *
 * Exit code 1 on any 5xx, any other refusal or request without an answer, any broken invariant,
 * or an RSS trend of SOAK_RSS_SLOPE_LIMIT MB/min (2) or more: the least-squares slope, over the
 * second half of the run, of the RSS's floor (its lowest value in each 40 s window). The p99
 * targets of the service benchmark are printed beside the figures but not enforced: as fast as
 * answered, 64 clients keep the service saturated and p99 measures the queue they build (see
 * bench/soak/summary.ts); SOAK_RATE measures them at a set load.
 * Results: stdout, bench/results/soak-<date>.json and soak-latest.json.
 *
 * Settings: SOAK_DURATION_S (300), SOAK_CONNECTIONS (64), SOAK_MAX_REQUESTS (1000000), SOAK_SIZE
 * (S; XS for a quick run), SOAK_POOL_MAX (10, the service's DB_POOL_MAX), SOAK_RSS_SLOPE_LIMIT (2),
 * SOAK_RATE (unset: every client as fast as answered; a number: pieces of work a second over all
 * clients, open loop, latencies from when each piece was due — for the p99 at a set load),
 * DATABASE_URL / DATABASE_MIGRATION_URL (an external server instead of the embedded one).
 */
import { existsSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';

import { freePort } from '@registry/data';
import { Client, Pool } from 'pg';

import { seedRegistry } from './seed/run';
import { SIZE_NAMES, SIZES, type SizeName } from './seed/sizes';
import { checkBalances, drive } from './soak/driver';
import { checkInvariants } from './soak/invariants';
import { rssTrend, sampleHeap, sampleRss } from './soak/memory';
import { P99_TARGETS_MS, summarize, verdict } from './soak/summary';
import { soakWorld } from './soak/world';
import { openBenchDatabase } from './support/bench-database';
import { startProcess, stopProcess, waitForOk, serviceEnv } from './support/factors-load';
import { findRepoRoot, formatTable, gitCommit, loadAverage1m, machineInfo, writeResults } from './support/report';

const positive = (name: string, fallback: number) => {
  const v = Number(process.env[name] ?? fallback);
  if (!Number.isFinite(v) || v <= 0) throw new Error(`${name} must be a positive number`);
  return v;
};
const sizeName = (process.env.SOAK_SIZE ?? 'S') as SizeName;
if (!SIZE_NAMES.includes(sizeName)) throw new Error(`SOAK_SIZE must be one of ${SIZE_NAMES.join(', ')}`);
const SETTINGS = {
  durationS: positive('SOAK_DURATION_S', 300),
  connections: Math.round(positive('SOAK_CONNECTIONS', 64)),
  maxRequests: Math.round(positive('SOAK_MAX_REQUESTS', 1_000_000)),
  size: sizeName,
  poolMax: Math.round(positive('SOAK_POOL_MAX', 10)),
  /**
   * MB/min, for the floor of the RSS (its lowest value in each 40 s, after the major collections;
   * bench/soak/memory.ts) over the second half of the run. 2 MB/min is 120 MB an hour, which would
   * fill a 512 MB container within a working day: a leak worth stopping for. A steady service's
   * floor stays well inside it once the heap has settled (see the report's figures).
   */
  rssSlopeLimit: positive('SOAK_RSS_SLOPE_LIMIT', 2),
  /** Pieces of work a second over all clients (open loop); unset: as fast as answered. */
  rate: process.env.SOAK_RATE ? positive('SOAK_RATE', 1) : null,
};

const fmt = (n: number, digits = 1) => n.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });

async function main(): Promise<void> {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const serviceMain = path.join(root, 'dist', 'apps', 'api', 'src', 'main.js');
  if (!existsSync(serviceMain)) throw new Error(`${serviceMain} is missing: run npm run build first`);
  const machine = machineInfo();
  console.log(
    `soak: ${SETTINGS.connections} clients${SETTINGS.rate === null ? '' : ` at ${SETTINGS.rate} pieces of work a second`} for ${SETTINGS.durationS} s (at most ${SETTINGS.maxRequests.toLocaleString('en-US')} requests), ` +
      `size ${SETTINGS.size}, ${machine.cores} cores, load ${fmt(machine.loadAverage1m)}`,
  );

  const tmp = await mkdtemp(path.join(os.tmpdir(), 'registry-soak-'));
  const database = await openBenchDatabase(tmp);
  let service: ReturnType<typeof startProcess> | undefined;
  const owner = new Client({ connectionString: database.server.ownerUrl });
  const pool = new Pool({ connectionString: database.server.ownerUrl, max: 2 });
  try {
    const seedStart = Date.now();
    const asOf = new Date(`${new Date().toISOString().slice(0, 10)}T00:00:00Z`);
    const seeded = await seedRegistry(database.server.ownerUrl, {
      size: SIZES[SETTINGS.size],
      seed: 1,
      asOf,
      templatesPerModel: 8,
      batchVessels: 250,
      samplePairs: 20,
    });
    console.log(`seeded size ${SETTINGS.size} in ${fmt((Date.now() - seedStart) / 1000)} s`);
    await owner.connect();
    await owner.query('ANALYZE');
    const world = await soakWorld(owner, seeded.credentialKey);

    const port = await freePort();
    service = startProcess(
      serviceMain,
      serviceEnv(port, database.server, {
        DB_POOL_MAX: String(SETTINGS.poolMax),
        SCHEDULER_ENABLED: 'false',
        DELIVERY_WORKER_PERIOD_MS: '0',
      }),
    );
    const baseUrl = `http://127.0.0.1:${port}`;
    await waitForOk(`${baseUrl}/health/ready`, 120_000).catch((err: Error) => {
      throw new Error(`${err.message}\n${service?.stderr()}`);
    });
    await checkBalances(baseUrl, world, new Date(Date.now() - 120_000));
    console.log(
      `${world.labs.length} labs, ${world.pairs.length} (person, vessel) pairs with a current factor; service pid ${service.child.pid}\n`,
    );

    const since = (await owner.query<{ now: Date }>('SELECT now() AS now')).rows[0]?.now as Date;
    const memory = sampleRss(service.child.pid);
    const heap = sampleHeap(`${baseUrl}/metrics`);
    const progress = setInterval(() => {
      const last = memory.samples.at(-1);
      if (last) console.log(`  ${Math.round(last.t)} s: RSS ${fmt(last.mb)} MB, load ${fmt(os.loadavg()[0] ?? 0)}`);
    }, 30_000);
    const run = await drive(world, {
      baseUrl,
      connections: SETTINGS.connections,
      durationMs: SETTINGS.durationS * 1000,
      maxRequests: SETTINGS.maxRequests,
      ...(SETTINGS.rate === null ? {} : { rate: SETTINGS.rate }),
    });
    clearInterval(progress);
    const trend = rssTrend(memory.stop());
    const heapTrend = rssTrend(heap.stop());
    const loadAtEnd = loadAverage1m();
    if (service.child.exitCode !== null || service.child.signalCode !== null) {
      throw new Error(`the service exited during the run\n${service.stderr()}`);
    }
    await stopProcess(service.child);

    const invariants = await checkInvariants(pool, since, run);
    const operations = summarize(run);
    const trendMeasured = Number.isFinite(trend.slopeMbPerMin);
    const result = verdict(
      operations,
      run,
      invariants,
      trendMeasured ? { slopeMbPerMin: trend.slopeMbPerMin, slopeLimitMbPerMin: SETTINGS.rssSlopeLimit } : undefined,
    );

    console.log(
      formatTable(
        ['operation', 'requests', 'req/s', 'p50 ms', 'p99 ms', 'max ms', 'p99 target', 'status codes'],
        operations.map((o) => [
          o.kind,
          o.requests.toLocaleString('en-US'),
          fmt(o.perSecond),
          fmt(o.latencyMs.p50),
          fmt(o.latencyMs.p99),
          fmt(o.latencyMs.max),
          P99_TARGETS_MS[o.kind] === undefined
            ? '-'
            : `< ${P99_TARGETS_MS[o.kind]}${o.latencyMs.p99 < (P99_TARGETS_MS[o.kind] as number) ? '' : ' MISSED'}`,
          Object.entries(o.statusCodes)
            .map(([code, n]) => `${code}: ${n}`)
            .join(', '),
        ]),
      ),
    );
    const total = operations.reduce((s, o) => s + o.requests, 0);
    console.log(
      `\n${total.toLocaleString('en-US')} requests in ${fmt(run.elapsedMs / 1000)} s (${fmt(total / (run.elapsedMs / 1000))} a second), ` +
        `${run.transportErrors} without an answer; load ${fmt(machine.loadAverage1m)} → ${fmt(loadAtEnd)}`,
    );
    console.log(
      `RSS: start ${fmt(trend.startMb)} MB, end ${fmt(trend.endMb)} MB, peak ${fmt(trend.peakMb)} MB; over the last ${fmt(trend.fittedOverS, 0)} s ` +
        (trendMeasured
          ? `the floor (lowest RSS per ${trend.floorWindowS} s) moved ${fmt(trend.slopeMbPerMin, 2)} MB/min (limit ${SETTINGS.rssSlopeLimit}), `
          : `no trend (fewer than three whole ${trend.floorWindowS} s windows: run 250 s or more), `) +
        `every sample ${fmt(trend.rawSlopeMbPerMin, 2)} MB/min\n`,
    );
    console.log(
      `JavaScript heap in use: start ${fmt(heapTrend.startMb)} MB, end ${fmt(heapTrend.endMb)} MB, peak ${fmt(heapTrend.peakMb)} MB; ` +
        `floor ${Number.isFinite(heapTrend.slopeMbPerMin) ? `${fmt(heapTrend.slopeMbPerMin, 2)} MB/min` : 'trend not measured'} over the last ${fmt(heapTrend.fittedOverS, 0)} s (reported, not a gate)\n`,
    );
    console.log(
      formatTable(
        ['invariant', 'result', 'detail'],
        invariants.map((c) => [c.id, c.pass ? 'ok' : 'BROKEN', JSON.stringify(c.detail)]),
      ),
    );
    const acknowledged = {
      creates: run.calibrations.length,
      submissions: run.calibrations.filter((c) => c.submitRequestId).length,
      approvals: run.calibrations.filter((c) => c.approveRequestId).length,
      factors: run.calibrations.filter((c) => c.factorId).length,
    };
    console.log(
      `\nacknowledged writes: ${acknowledged.creates} creates, ${acknowledged.submissions} submissions, ${acknowledged.approvals} approvals (${acknowledged.factors} factors)`,
    );
    for (const u of run.unexpected.slice(0, 10)) console.log(`  unexpected ${u.kind} ${u.status ?? 'no answer'}: ${u.detail}`);

    const report = {
      benchmark: 'soak',
      startedAt,
      gitCommit: gitCommit(root),
      machine,
      loadAverage1mAtEnd: loadAtEnd,
      settings: SETTINGS,
      registry: { size: SETTINGS.size, counts: SIZES[SETTINGS.size], labs: world.labs.length, pairs: world.pairs.length },
      elapsedSeconds: run.elapsedMs / 1000,
      requests: total,
      transportErrors: run.transportErrors,
      operations,
      acknowledged,
      memory: { ...trend, slopeLimitMbPerMin: SETTINGS.rssSlopeLimit, samples: memory.samples.map((s) => [s.t, s.mb]) },
      heapUsed: { ...heapTrend, samples: heap.samples.map((s) => [s.t, s.mb]) },
      invariants,
      unexpected: run.unexpected,
      pass: result.pass,
      failures: result.failures,
    };
    const files = writeResults(path.join(root, 'bench', 'results'), 'soak', report);
    console.log(`\n${result.pass ? 'PASS' : 'FAILED'}${result.failures.map((f) => `\n  ${f}`).join('')}`);
    console.log(`wrote ${files.map((f) => path.relative(root, f)).join(' and ')}`);
    if (!result.pass) process.exitCode = 1;
  } finally {
    if (service) await stopProcess(service.child);
    await owner.end().catch(() => undefined);
    await pool.end();
    await database.close();
    await rm(tmp, { recursive: true, force: true });
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
