/**
 * Factor service benchmark: `npm run bench:factors`.
 *
 * Starts the built service (dist/apps/api/src/main.js) on a fresh database — an embedded
 * PostgreSQL in a temporary folder, or a new database on the server in DATABASE_URL (dropped
 * afterwards) — seeds one lab with 200 analysts, 2,000 vessels and their approved calibrations
 * and factors by SQL, and a service credential. Then, in the same run and on the same database,
 * a bare Fastify + pg server doing the same indexed lookup (bench/support/bare-server.ts).
 * autocannon drives each endpoint with random (person, vessel) pairs at 64 connections for
 * 10 s after a 3 s warm-up: the bare lookup, GET /v1/factors/current by ids and by asset tag and
 * email, and POST /v1/factors/corrections.
 *
 * Targets: the service's throughput ≥ 50 % of the bare endpoint's, p99 < 25 ms, no errors.
 * Results go to stdout and to bench/results/factors-<date>.json and factors-latest.json.
 * A missed target is printed as MISSED; the exit code stays 0 (a report, not a gate), except
 * when a request failed (an error is a bug, not a timing).
 *
 * Settings: FACTOR_BENCH_CONNECTIONS (64), FACTOR_BENCH_DURATION_S (10), FACTOR_BENCH_WARMUP_S (3),
 * FACTOR_BENCH_POOL_MAX (10, both servers), FACTOR_BENCH_ROUNDS (1: with more, the endpoints run
 * interleaved and the median round is reported), DATABASE_URL (external server; needs CREATEDB).
 *
 * Besides throughput and latency, each line gives the CPU time the server process spent per
 * request (Linux): on a shared or busy machine throughput swings with other load, CPU per
 * request much less. The load average at start and end is recorded for the same reason.
 */
import { existsSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';

import { freePort } from '@registry/data';

import { FactorLookupRepository } from '../apps/api/src/factors/factor-lookup.repository';
import { type LoadResult, load, portFromStdout, startProcess, stopProcess, waitForOk, serviceEnv } from './support/factors-load';
import { openBenchDatabase } from './support/bench-database';
import { findRepoRoot, gitCommit, writeResults } from './support/report';
import { type Pair, lookupPlan, seedFactorBench } from './support/factors-seed';
import { factorTargets } from './support/factor-targets';

const int = (name: string, fallback: number) => {
  const v = Number(process.env[name] ?? fallback);
  if (!Number.isInteger(v) || v <= 0) throw new Error(`${name} must be a positive integer`);
  return v;
};
const SETTINGS = {
  connections: int('FACTOR_BENCH_CONNECTIONS', 64),
  durationS: int('FACTOR_BENCH_DURATION_S', 10),
  warmupS: int('FACTOR_BENCH_WARMUP_S', 3),
  poolMax: int('FACTOR_BENCH_POOL_MAX', 10),
  rounds: int('FACTOR_BENCH_ROUNDS', 1),
  seed: { people: 200, vessels: 2000, factorsPerVessel: 5 },
};
const TARGET_RATIO = 0.5;

/** The run with the median throughput. */
function median(rs: readonly LoadResult[]): LoadResult {
  const sorted = [...rs].sort((a, b) => a.requestsPerSecond - b.requestsPerSecond);
  return sorted[Math.floor((sorted.length - 1) / 2)] as LoadResult;
}
const TARGET_P99_MS = 25;

const fmt = (n: number, digits = 1) => n.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });

function table(results: readonly LoadResult[], bare: LoadResult): string {
  const header = ['endpoint', 'req/s', 'vs bare', 'p50 ms', 'p90 ms', 'p99 ms', 'max ms', 'errors', 'non-2xx', 'CPU µs/req'];
  const rows = results.map((r) => [
    r.id,
    fmt(r.requestsPerSecond, 0),
    r === bare ? '-' : `${fmt((100 * r.requestsPerSecond) / bare.requestsPerSecond, 0)} %`,
    fmt(r.latencyMs.p50),
    fmt(r.latencyMs.p90),
    fmt(r.latencyMs.p99),
    fmt(r.latencyMs.max),
    String(r.errors + r.timeouts),
    String(r.non2xx),
    r.serverCpuUsPerRequest === null ? '-' : fmt(r.serverCpuUsPerRequest, 0),
  ]);
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const line = (cells: readonly string[]) =>
    cells.map((c, i) => (i === 0 ? c.padEnd(widths[i] ?? 0) : c.padStart(widths[i] ?? 0))).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

async function main(): Promise<void> {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const serviceMain = path.join(root, 'dist', 'apps', 'api', 'src', 'main.js');
  const bareMain = path.join(root, 'dist', 'bench', 'support', 'bare-server.js');
  if (!existsSync(serviceMain)) throw new Error(`${serviceMain} is missing: run npm run build first`);
  const cpus = os.cpus();
  const loadAtStart = os.loadavg()[0] ?? 0;
  console.log(`factor benchmark: ${cpus[0]?.model.trim() ?? 'unknown cpu'}, ${cpus.length} cores, node ${process.version}`);
  console.log(
    `${SETTINGS.connections} connections, ${SETTINGS.warmupS} s warm-up + ${SETTINGS.durationS} s per endpoint, pool ${SETTINGS.poolMax}\n`,
  );

  const tmp = await mkdtemp(path.join(os.tmpdir(), 'registry-bench-'));
  const database = await openBenchDatabase(tmp);
  const children: ReturnType<typeof startProcess>[] = [];
  try {
    const seedStart = Date.now();
    const seeded = await seedFactorBench(database.server.ownerUrl, SETTINGS.seed);
    console.log(
      `seeded ${seeded.counts.people} people, ${seeded.counts.vessels} vessels, ${seeded.counts.calibrations} calibrations and factors in ${Date.now() - seedStart} ms`,
    );
    const plan = await lookupPlan(
      database.server.ownerUrl,
      FactorLookupRepository.statementFor('id', 'id', false).text,
      seeded.pairs[0] as Pair,
    );
    console.log(`lookup plan (by ids):\n  ${plan.join('\n  ')}\n`);

    const servicePort = await freePort();
    const service = startProcess(
      serviceMain,
      serviceEnv(servicePort, database.server, { LOG_LEVEL: 'info', DB_POOL_MAX: String(SETTINGS.poolMax) }),
    );
    children.push(service);
    await waitForOk(`http://127.0.0.1:${servicePort}/health/ready`).catch((err: Error) => {
      throw new Error(`${err.message}\n${service.stderr()}`);
    });
    const bare = startProcess(bareMain, { BARE_DATABASE_URL: database.server.url, BARE_POOL_MAX: String(SETTINGS.poolMax) }, true);
    children.push(bare);
    const barePort = await portFromStdout(bare.child).catch((err: Error) => {
      throw new Error(`${err.message}\n${bare.stderr()}`);
    });

    const loads = factorTargets(seeded.pairs, { service: servicePort, bare: barePort }, seeded.credentialKey);
    const pid = (t: (typeof loads)[number]) => (t.server === 'bare' ? bare.child.pid : service.child.pid);
    for (const target of loads) await load(target, SETTINGS.connections, SETTINGS.warmupS, pid(target));
    // Each endpoint runs `rounds` times, interleaved; the round with the median throughput is reported.
    const runs = new Map<string, LoadResult[]>();
    for (let round = 0; round < SETTINGS.rounds; round++) {
      for (const target of loads) {
        const r = await load(target, SETTINGS.connections, SETTINGS.durationS, pid(target));
        runs.set(r.id, [...(runs.get(r.id) ?? []), r]);
        const cpu = r.serverCpuUsPerRequest === null ? '' : `, server CPU ${fmt(r.serverCpuUsPerRequest, 0)} µs/request`;
        console.log(
          `  ${r.id}: ${fmt(r.requestsPerSecond, 0)} req/s, p99 ${fmt(r.latencyMs.p99)} ms${cpu} (load ${fmt(os.loadavg()[0] ?? 0)})`,
        );
      }
    }
    const results = loads.map((t) => median(runs.get(t.id) ?? []));
    const bareResult = results[0] as LoadResult;
    console.log(`\n${table(results, bareResult)}\n`);

    const checks = results
      .filter((r) => r !== bareResult)
      .flatMap((r) => {
        const ratio = r.requestsPerSecond / bareResult.requestsPerSecond;
        const failed = r.errors + r.timeouts + r.non2xx;
        return [
          {
            id: `${r.id}-throughput`,
            description: `${r.id}: ≥ ${TARGET_RATIO * 100} % of bare throughput`,
            actual: ratio,
            pass: ratio >= TARGET_RATIO,
          },
          {
            id: `${r.id}-p99`,
            description: `${r.id}: p99 < ${TARGET_P99_MS} ms`,
            actual: r.latencyMs.p99,
            pass: r.latencyMs.p99 < TARGET_P99_MS,
          },
          { id: `${r.id}-errors`, description: `${r.id}: no failed requests`, actual: failed, pass: failed === 0 },
        ];
      });
    for (const c of checks)
      console.log(
        `${c.pass ? 'PASS  ' : 'MISSED'}  ${c.description}: ${c.id.endsWith('throughput') ? `${fmt(100 * c.actual, 0)} %` : fmt(c.actual)}`,
      );

    const report = {
      benchmark: 'factors',
      startedAt,
      gitCommit: gitCommit(root),
      machine: {
        cpuModel: cpus[0]?.model.trim() ?? 'unknown',
        cores: cpus.length,
        node: process.version,
        loadAverage1mAtStart: loadAtStart,
        loadAverage1mAtEnd: os.loadavg()[0],
      },
      settings: SETTINGS,
      database: process.env.DATABASE_URL ? 'external (DATABASE_URL), fresh database' : 'embedded PostgreSQL, fresh cluster',
      seeded: seeded.counts,
      lookupPlan: plan,
      rounds: Object.fromEntries(runs),
      results,
      ratiosToBare: Object.fromEntries(
        results.filter((r) => r !== bareResult).map((r) => [r.id, r.requestsPerSecond / bareResult.requestsPerSecond]),
      ),
      targets: checks,
    };
    const files = writeResults(path.join(root, 'bench', 'results'), 'factors', report);
    console.log(`\nwrote ${files.map((f) => path.relative(root, f)).join(' and ')}`);
    if (checks.some((c) => c.id.endsWith('-errors') && !c.pass)) process.exitCode = 1;
  } finally {
    for (const c of children) await stopProcess(c.child);
    await database.close();
    await rm(tmp, { recursive: true, force: true });
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
