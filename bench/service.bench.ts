/**
 * Service benchmark at registry scale: `npm run bench:service`.
 *
 * Runs against the registry `npm run bench:seed` wrote (default: size M, 100,000 vessels and
 * 1,000,000 calibrations, in ./.data/bench; seeded first when BENCH_SEED_FILE is missing). It starts
 * the built service (dist/apps/api/src/main.js) with its scheduler and delivery worker off, and a
 * bare Fastify + pg server doing the factor lookup's very statement (the baseline), then drives with
 * autocannon, at each connection count (16 and 64), for a fixed duration after a warm-up:
 *   - the bare lookup; GET /v1/factors/current by ids and by asset tag + email; POST
 *     /v1/factors/corrections — random (person, vessel) pairs with a current factor, service credential;
 *   - GET /v1/vessels filtered (lab, kind, in service), 50 a page, random sort — a lab manager's session;
 *   - POST /v1/calibrations: a 25 mL pipette run of ten replicates, computed, stored with its audit
 *     entry — analysts' sessions, each on vessels, balance and thermometer of their own lab.
 * Then, with nothing else running:
 *   - the due-date scan: a second service process with its scheduler on; the duration of its passes
 *     over every lab (first pass, then steady passes), read from its /metrics;
 *   - an import of 10,000 vessels from one CSV into a lab (POST /v1/vessels/import).
 * The service's resident set size is sampled every 100 ms throughout; the peak is reported.
 *
 * Every figure is also given as a ratio to the bare lookup at the same connection count.
 * Targets (issue "Scale"): factor endpoints at 64 connections ≥ 50 % of bare throughput and
 * p99 < 25 ms; calibration submission p99 < 100 ms, checked at a steady 20 a second (open loop,
 * evenly spaced, latency from each request's due instant) and reported as fast as answered; steady due
 * scan < 2 s; import < 5 s; no failed request anywhere. A missed target prints MISSED; the exit code stays 0 (a report, not
 * a gate) unless a request failed. The CSV export against COPY is `npm run bench:export`.
 * Results: stdout, bench/results/service-<date>.json and service-latest.json.
 *
 * The run writes to the seeded registry (draft calibrations, imported vessels under a per-run
 * tag prefix, notices), as a busy registry would; re-seed with `--reset` for a pristine one.
 *
 * Settings: BENCH_SEED_FILE (./.data/bench-seed.json), BENCH_SIZE (M, when seeding),
 * SERVICE_BENCH_CONNECTIONS ("16,64"), SERVICE_BENCH_DURATION_S (10), SERVICE_BENCH_WARMUP_S (3),
 * SERVICE_BENCH_ROUNDS (1; more: interleaved rounds, the median reported), SERVICE_BENCH_POOL_MAX (10),
 * SERVICE_BENCH_IMPORT_ROWS (10000), DATABASE_URL (when the seed went to an external server).
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';

import { freePort, openDatabaseServer } from '@registry/data';
import { Client } from 'pg';

import { FactorLookupRepository } from '../apps/api/src/factors/factor-lookup.repository';
import { type FactorPair, factorTargets } from './support/factor-targets';
import {
  type LoadResult,
  type LoadTarget,
  load,
  memoryOf,
  openLoop,
  portFromStdout,
  startProcess,
  stopProcess,
  waitForOk,
  serviceEnv,
} from './support/factors-load';
import { lookupPlan } from './support/factors-seed';
import { sessionsFor } from './support/plan-battery';
import { LISTED_KINDS, LIST_SORTS, pipetteRunBody } from './support/workload';
import { findRepoRoot, formatTable, gitCommit, machineInfo, loadAverage1m, writeResults } from './support/report';

const int = (name: string, fallback: number) => {
  const v = Number(process.env[name] ?? fallback);
  if (!Number.isInteger(v) || v <= 0) throw new Error(`${name} must be a positive integer`);
  return v;
};
const connectionCounts = (process.env.SERVICE_BENCH_CONNECTIONS ?? '16,64').split(',').map((v) => {
  const n = Number(v.trim());
  if (!Number.isInteger(n) || n <= 0) throw new Error('SERVICE_BENCH_CONNECTIONS must list positive integers, e.g. 16,64');
  return n;
});
const SETTINGS = {
  seedFile: process.env.BENCH_SEED_FILE ?? path.join('.data', 'bench-seed.json'),
  connections: connectionCounts,
  durationS: int('SERVICE_BENCH_DURATION_S', 10),
  warmupS: int('SERVICE_BENCH_WARMUP_S', 3),
  rounds: int('SERVICE_BENCH_ROUNDS', 1),
  poolMax: int('SERVICE_BENCH_POOL_MAX', 10),
  importRows: int('SERVICE_BENCH_IMPORT_ROWS', 10_000),
  /** Calibration submissions per second of the fixed-rate run (a busy registry: 72,000 an hour at 20). */
  submissionRate: int('SERVICE_BENCH_SUBMISSION_RATE', 20),
  /** Only these parts (endpoint ids, `import`, `due-scan`); the bare lookup always runs. For profiling one part. */
  only: (process.env.SERVICE_BENCH_ONLY ?? '')
    .split(',')
    .map((v) => v.trim())
    .filter(Boolean),
};
const runs = (part: string) => SETTINGS.only.length === 0 || SETTINGS.only.includes(part);
const TARGETS = { factorRatio: 0.5, factorP99Ms: 25, submissionP99Ms: 100, dueScanS: 2, importS: 5, atConnections: 64 };
const FACTOR_IDS = ['current-by-ids', 'current-by-tag-email', 'corrections'];
interface SeedFile {
  readonly size: string;
  readonly database: { readonly embedded: boolean; readonly dataDir?: string };
  readonly counts: Record<string, number>;
  readonly credentialKey: string;
  readonly pairs: readonly FactorPair[];
}

interface LabKit {
  readonly labId: string;
  readonly managerToken: string;
  readonly analystTokens: readonly string[];
  readonly pipetteIds: readonly string[];
  readonly balanceId: string;
  readonly thermometerId: string;
}

const pickFrom = <T>(items: readonly T[]): T => items[Math.floor(Math.random() * items.length)] as T;
const fmt = (n: number, digits = 1) => n.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });

function readSeed(root: string): SeedFile {
  const file = path.resolve(root, SETTINGS.seedFile);
  if (!existsSync(file)) {
    const size = process.env.BENCH_SIZE ?? 'M';
    console.log(`${file} is missing: seeding size ${size} first (size M takes about 12 minutes on 2 cores)\n`);
    execFileSync(process.execPath, [path.join(root, 'dist', 'bench', 'seed.js'), '--size', size, '--out', file], {
      cwd: root,
      stdio: 'inherit',
    });
  }
  return JSON.parse(readFileSync(file, 'utf8')) as SeedFile;
}

/** The sample pairs the lookup answers now: an active person, a vessel in service, a current factor not about to expire. */
async function answerablePairs(db: Client, pairs: readonly FactorPair[]): Promise<FactorPair[]> {
  const { rows } = await db.query<{ i: number }>(
    `SELECT p.i FROM unnest($1::uuid[], $2::uuid[]) WITH ORDINALITY AS p (person_id, vessel_id, i)
      WHERE EXISTS (SELECT 1 FROM people x WHERE x.id = p.person_id AND x.status = 'active')
        AND EXISTS (SELECT 1 FROM vessels v WHERE v.id = p.vessel_id AND v.status = 'in-service')
        AND EXISTS (SELECT 1 FROM factors f WHERE f.person_id = p.person_id AND f.vessel_id = p.vessel_id AND f.state = 'current'
                      AND f.valid_until > now() + interval '1 day')`,
    [pairs.map((p) => p.personId), pairs.map((p) => p.vesselId)],
  );
  const kept = rows.map((r) => pairs[Number(r.i) - 1] as FactorPair);
  if (kept.length === 0) throw new Error('none of the sample pairs has an active person with a current factor');
  return kept;
}

/** Per lab: a manager's session, analysts' sessions, active 25 mL pipettes, a balance and a thermometer. */
async function labKits(db: Client): Promise<LabKit[]> {
  const { rows } = await db.query<{
    lab_id: string;
    managers: string[];
    analysts: string[];
    pipettes: string[];
    balance_id: string | null;
    thermometer_id: string | null;
  }>(`
    SELECT l.id AS lab_id,
           (SELECT array_agg(person_id ORDER BY person_id) FROM lab_memberships m WHERE m.lab_id = l.id AND m.lab_role = 'manager') AS managers,
           (SELECT array_agg(person_id ORDER BY person_id) FROM (SELECT person_id FROM lab_memberships m JOIN people p ON p.id = m.person_id
              WHERE m.lab_id = l.id AND m.lab_role = 'analyst' AND p.status = 'active' ORDER BY person_id LIMIT 8) a) AS analysts,
           (SELECT array_agg(id) FROM (SELECT id FROM vessels v WHERE v.lab_id = l.id AND v.kind = 'one-mark-pipette'
              AND v.nominal_volume_ml = 25 AND v.status = 'in-service' ORDER BY id LIMIT 100) v) AS pipettes,
           (SELECT id FROM balances b WHERE b.lab_id = l.id AND b.status = 'in-service' AND b.readability_g <= 0.0001 AND b.capacity_g >= 100
              ORDER BY id LIMIT 1) AS balance_id,
           (SELECT id FROM instruments i WHERE i.lab_id = l.id AND i.status = 'in-service' AND i.kind IN ('thermometer', 'thermohygrometer')
              ORDER BY id LIMIT 1) AS thermometer_id
      FROM labs l
     WHERE l.retired_at IS NULL
     ORDER BY l.code`);
  const usable = rows.filter((r) => r.managers?.length && r.analysts?.length && r.pipettes?.length && r.balance_id && r.thermometer_id);
  if (usable.length === 0) throw new Error('no lab has a manager, analysts, 25 mL pipettes, a balance and a thermometer');
  const tokens = await sessionsFor(db, [...new Set(usable.flatMap((r) => [r.managers[0] as string, ...r.analysts]))]);
  return usable.map((r) => ({
    labId: r.lab_id,
    managerToken: tokens.get(r.managers[0] as string) as string,
    analystTokens: r.analysts.map((id) => tokens.get(id) as string),
    pipetteIds: r.pipettes,
    balanceId: r.balance_id as string,
    thermometerId: r.thermometer_id as string,
  }));
}

function registryTargets(kits: readonly LabKit[], servicePort: number): (LoadTarget & { server: 'service' })[] {
  const url = `http://127.0.0.1:${servicePort}`;
  return [
    {
      id: 'vessel-list',
      server: 'service',
      description: 'GET /v1/vessels?labId&kind&status=in-service&limit=50&sort (lab manager session)',
      url,
      method: 'GET',
      headers: {},
      next: () => {
        const kit = pickFrom(kits);
        const query = new URLSearchParams({
          labId: kit.labId,
          kind: pickFrom(LISTED_KINDS),
          status: 'in-service',
          limit: '50',
          sort: pickFrom(LIST_SORTS),
        });
        return { path: `/v1/vessels?${query}`, headers: { authorization: `Bearer ${kit.managerToken}` } };
      },
    },
    {
      id: 'calibration-submission',
      server: 'service',
      description: 'POST /v1/calibrations: 25 mL pipette, 10 replicates, computed and audited (analyst session)',
      url,
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      next: () => {
        const kit = pickFrom(kits);
        const body = pipetteRunBody(kit, pickFrom(kit.pipetteIds), new Date(Date.now() - 3_600_000));
        return {
          path: '/v1/calibrations',
          body: JSON.stringify(body),
          headers: { authorization: `Bearer ${pickFrom(kit.analystTokens)}`, 'content-type': 'application/json' },
        };
      },
    },
  ];
}

/** Samples a process's RSS every 100 ms; `stop` gives the peak seen and the kernel's high-water mark. */
function sampleMemory(pid: number | undefined) {
  let peak = 0;
  const timer = setInterval(() => {
    const m = memoryOf(pid);
    if (m) peak = Math.max(peak, m.rssMb);
  }, 100);
  return {
    stop: () => {
      clearInterval(timer);
      const m = memoryOf(pid);
      return { peakRssMb: Math.max(peak, m?.rssMb ?? 0), highWaterMarkMb: m?.hwmMb ?? null };
    },
  };
}

/** Scheduler passes of a service started with SCHEDULER_ENABLED: their durations from /metrics. */
async function duePasses(metricsUrl: string, passes: number, timeoutMs: number): Promise<number[]> {
  const durations: number[] = [];
  let seen = { count: 0, sum: 0 };
  const end = Date.now() + timeoutMs;
  while (durations.length < passes && Date.now() < end) {
    const text = await (await fetch(metricsUrl)).text();
    const read = (name: string) =>
      Number(new RegExp(`^scheduler_pass_duration_seconds_${name}\\{outcome="ok"\\} (\\S+)$`, 'm').exec(text)?.[1] ?? 0);
    if (/^scheduler_pass_duration_seconds_count\{outcome="failed"\} [1-9]/m.test(text)) throw new Error('a scheduler pass failed');
    const now = { count: read('count'), sum: read('sum') };
    if (now.count > seen.count) {
      // One pass per poll at most: a 5 s period and a 100 ms poll leave no room for two.
      durations.push(now.sum - seen.sum);
      seen = now;
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  if (durations.length < passes) throw new Error(`only ${durations.length} of ${passes} scheduler passes within ${timeoutMs} ms`);
  return durations;
}

/** A CSV of `rows` new 10 mL and 25 mL class A pipettes and 100 mL flasks, tags unique to this run. */
function importCsv(rows: number, prefix: string): string {
  const kinds = [
    ['one-mark-pipette', '10'],
    ['one-mark-pipette', '25'],
    ['volumetric-flask', '100'],
  ] as const;
  const lines = ['assetTag,kind,nominalVolumeMl,accuracyClass,graduationIntervalMl,material,makerSerial,location,notes'];
  for (let n = 1; n <= rows; n++) {
    const [kind, volume] = kinds[n % kinds.length] as (typeof kinds)[number];
    lines.push(`${prefix}-${String(n).padStart(5, '0')},${kind},${volume},A,,borosilicate-3-3,S-${n},"Store 3, shelf ${n % 40}",`);
  }
  return `${lines.join('\r\n')}\r\n`;
}

async function smallestLab(db: Client, kits: readonly LabKit[]): Promise<LabKit> {
  const { rows } = await db.query<{ lab_id: string }>(
    `SELECT l.id AS lab_id FROM unnest($1::uuid[]) AS l (id) ORDER BY (SELECT count(*) FROM vessels v WHERE v.lab_id = l.id), l.id LIMIT 1`,
    [kits.map((k) => k.labId)],
  );
  return kits.find((k) => k.labId === rows[0]?.lab_id) ?? (kits[0] as LabKit);
}

async function timeImport(servicePort: number, kit: LabKit, rows: number): Promise<{ seconds: number; imported: number; status: number }> {
  const csv = importCsv(rows, `IMP${Date.now().toString(36).toUpperCase()}`);
  const started = process.hrtime.bigint();
  const res = await fetch(`http://127.0.0.1:${servicePort}/v1/vessels/import?labId=${kit.labId}`, {
    method: 'POST',
    headers: { authorization: `Bearer ${kit.managerToken}`, 'content-type': 'text/csv' },
    body: csv,
  });
  const body = (await res.json()) as { imported?: number };
  const seconds = Number(process.hrtime.bigint() - started) / 1e9;
  if (res.status !== 201) throw new Error(`import answered ${res.status}: ${JSON.stringify(body).slice(0, 500)}`);
  return { seconds, imported: body.imported ?? 0, status: res.status };
}

function median(rs: readonly LoadResult[]): LoadResult {
  const sorted = [...rs].sort((a, b) => a.requestsPerSecond - b.requestsPerSecond);
  return sorted[Math.floor((sorted.length - 1) / 2)] as LoadResult;
}

function loadTable(results: readonly LoadResult[], bare: LoadResult): string {
  return formatTable(
    ['endpoint', 'req/s', 'vs bare', 'p50 ms', 'p99 ms', 'max ms', 'errors', 'non-2xx', 'CPU µs/req'],
    results.map((r) => [
      r.id,
      fmt(r.requestsPerSecond, 0),
      r === bare ? '-' : `${fmt((100 * r.requestsPerSecond) / bare.requestsPerSecond, 0)} %`,
      fmt(r.latencyMs.p50),
      fmt(r.latencyMs.p99),
      fmt(r.latencyMs.max),
      String(r.errors + r.timeouts),
      String(r.non2xx),
      r.serverCpuUsPerRequest === null ? '-' : fmt(r.serverCpuUsPerRequest, 0),
    ]),
  );
}

interface Check {
  readonly id: string;
  readonly description: string;
  readonly actual: number;
  readonly limit: number;
  readonly pass: boolean;
}

async function main(): Promise<void> {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const serviceMain = path.join(root, 'dist', 'apps', 'api', 'src', 'main.js');
  const bareMain = path.join(root, 'dist', 'bench', 'support', 'bare-server.js');
  if (!existsSync(serviceMain)) throw new Error(`${serviceMain} is missing: run npm run build first`);
  const machine = machineInfo();
  console.log(`service benchmark: ${machine.cpuModel}, ${machine.cores} cores, node ${machine.nodeVersion}`);

  const seed = readSeed(root);
  const external = process.env.DATABASE_URL;
  if (!seed.database.embedded && !external) throw new Error('the seed went to an external server: set DATABASE_URL to it');
  const server = await openDatabaseServer(
    seed.database.embedded ? { dataDir: seed.database.dataDir as string } : { url: external as string, dataDir: path.join(root, '.data') },
  );
  console.log(
    `registry of size ${seed.size}: ${Object.entries(seed.counts)
      .map(([t, n]) => `${n.toLocaleString('en-US')} ${t}`)
      .join(', ')}`,
  );
  console.log(
    `${SETTINGS.connections.join(' and ')} connections, ${SETTINGS.warmupS} s warm-up + ${SETTINGS.durationS} s per endpoint, pool ${SETTINGS.poolMax}\n`,
  );
  const children: ReturnType<typeof startProcess>[] = [];
  const db = new Client({ connectionString: server.ownerUrl });
  await db.connect();
  try {
    const kits = await labKits(db);
    const plan = await lookupPlan(
      server.ownerUrl,
      FactorLookupRepository.statementFor('id', 'id', false).text,
      seed.pairs[0] as FactorPair,
    );
    console.log(`factor lookup plan:\n  ${plan.join('\n  ')}\n`);

    const envFor = (port: number, scheduler: boolean) =>
      serviceEnv(port, server, {
        DB_POOL_MAX: String(SETTINGS.poolMax),
        SCHEDULER_ENABLED: String(scheduler),
        SCHEDULER_PERIOD_SECONDS: '5',
        DELIVERY_WORKER_PERIOD_MS: '0',
      });
    const servicePort = await freePort();
    const service = startProcess(serviceMain, envFor(servicePort, false));
    children.push(service);
    await waitForOk(`http://127.0.0.1:${servicePort}/health/ready`, 120_000).catch((err: Error) => {
      throw new Error(`${err.message}\n${service.stderr()}`);
    });
    const bare = startProcess(bareMain, { BARE_DATABASE_URL: server.url, BARE_POOL_MAX: String(SETTINGS.poolMax) }, true);
    children.push(bare);
    const barePort = await portFromStdout(bare.child).catch((err: Error) => {
      throw new Error(`${err.message}\n${bare.stderr()}`);
    });

    const memory = sampleMemory(service.child.pid);
    const pairs = await answerablePairs(db, seed.pairs);
    const loads = [
      ...factorTargets(pairs, { service: servicePort, bare: barePort }, seed.credentialKey),
      ...registryTargets(kits, servicePort),
    ].filter((t) => t.server === 'bare' || runs(t.id));
    const pid = (t: (typeof loads)[number]) => (t.server === 'bare' ? bare.child.pid : service.child.pid);
    const byConnections: Record<string, LoadResult[]> = {};
    const rounds: Record<string, Record<string, LoadResult[]>> = {};
    for (const connections of SETTINGS.connections) {
      console.log(`${connections} connections`);
      for (const target of loads) await load(target, connections, SETTINGS.warmupS, pid(target));
      const runs = new Map<string, LoadResult[]>();
      for (let round = 0; round < SETTINGS.rounds; round++) {
        for (const target of loads) {
          const r = await load(target, connections, SETTINGS.durationS, pid(target));
          runs.set(r.id, [...(runs.get(r.id) ?? []), r]);
          const rss = memoryOf(pid(target) === service.child.pid ? service.child.pid : undefined)?.rssMb;
          console.log(
            `  ${r.id}: ${fmt(r.requestsPerSecond, 0)} req/s, p99 ${fmt(r.latencyMs.p99)} ms (load ${fmt(loadAverage1m())}${rss ? `, service RSS ${fmt(rss, 0)} MB` : ''})`,
          );
        }
      }
      const results = loads.map((t) => median(runs.get(t.id) ?? []));
      byConnections[String(connections)] = results;
      rounds[String(connections)] = Object.fromEntries(runs);
      console.log(`\n${loadTable(results, results[0] as LoadResult)}\n`);
    }

    // Submissions as a busy registry sends them: a steady rate (open loop), not as fast as answered.
    let submissionsAtRate: LoadResult | null = null;
    const submission = loads.find((t) => t.id === 'calibration-submission');
    if (submission) {
      const at = { ...submission, id: `calibration-submission-${SETTINGS.submissionRate}-per-s` };
      // Three times the duration: at 20 a second, 10 s give only 200 samples and p99 is the second-worst of them.
      submissionsAtRate = await openLoop(at, SETTINGS.submissionRate, 3 * SETTINGS.durationS, service.child.pid);
      console.log(
        `${at.id} (even intervals, open loop): p50 ${fmt(submissionsAtRate.latencyMs.p50)} ms, p99 ${fmt(submissionsAtRate.latencyMs.p99)} ms, max ${fmt(submissionsAtRate.latencyMs.max)} ms, ${submissionsAtRate.non2xx + submissionsAtRate.errors} failed\n`,
      );
    }

    let imported: Awaited<ReturnType<typeof timeImport>> | null = null;
    if (runs('import')) {
      console.log(`import of ${SETTINGS.importRows.toLocaleString('en-US')} vessels from CSV…`);
      // Into the lab with the fewest vessels: every run adds its 10,000, and one lab growing run after run would change the lists measured.
      imported = await timeImport(servicePort, await smallestLab(db, kits), SETTINGS.importRows);
      console.log(`  ${fmt(imported.seconds, 2)} s (${imported.imported} vessels)`);
    }
    const serviceMemory = memory.stop();
    await stopProcess(service.child);
    const dueScan = runs('due-scan') ? await timeDueScan(db, (port) => startProcess(serviceMain, envFor(port, true)), children) : null;

    const at = byConnections[String(TARGETS.atConnections)] ?? byConnections[String(SETTINGS.connections.at(-1))] ?? [];
    const bareAt = at[0] as LoadResult;
    const measured = (id: string) => at.filter((r) => r.id === id);
    const checks: Check[] = [
      ...FACTOR_IDS.flatMap((id) =>
        measured(id).flatMap((r) => [
          check(
            `${id}-throughput`,
            `${id}: ≥ ${TARGETS.factorRatio * 100} % of bare throughput`,
            r.requestsPerSecond / bareAt.requestsPerSecond,
            TARGETS.factorRatio,
            'min',
          ),
          check(`${id}-p99`, `${id}: p99 < ${TARGETS.factorP99Ms} ms`, r.latencyMs.p99, TARGETS.factorP99Ms),
        ]),
      ),
      ...(submissionsAtRate
        ? [
            check(
              'calibration-submission-p99',
              `calibration submission at ${SETTINGS.submissionRate}/s: p99 < ${TARGETS.submissionP99Ms} ms`,
              submissionsAtRate.latencyMs.p99,
              TARGETS.submissionP99Ms,
            ),
          ]
        : []),
      ...measured('calibration-submission').map((r) =>
        check(
          'calibration-submission-p99-saturated',
          `calibration submission as fast as answered: p99 < ${TARGETS.submissionP99Ms} ms`,
          r.latencyMs.p99,
          TARGETS.submissionP99Ms,
        ),
      ),
      ...(dueScan
        ? [check('due-scan', `due-date scan (steady pass): < ${TARGETS.dueScanS} s`, dueScan.steadySeconds, TARGETS.dueScanS)]
        : []),
      ...(imported
        ? [check('import', `import of ${SETTINGS.importRows} vessels: < ${TARGETS.importS} s`, imported.seconds, TARGETS.importS)]
        : []),
      ...Object.entries({ ...byConnections, ...(submissionsAtRate ? { [`${SETTINGS.submissionRate}/s`]: [submissionsAtRate] } : {}) }).map(
        ([connections, results]) => {
          const failed = results.reduce((n, r) => n + r.errors + r.timeouts + r.non2xx, 0);
          return {
            id: `errors-${connections}`,
            description: `no failed request at ${connections.includes('/') ? connections : `${connections} connections`}`,
            actual: failed,
            limit: 0,
            pass: failed === 0,
          };
        },
      ),
    ];
    for (const c of checks) console.log(`${c.pass ? 'PASS  ' : 'MISSED'}  ${c.description}: ${fmt(c.actual, 2)}`);
    console.log(
      `service peak RSS ${fmt(serviceMemory.peakRssMb, 0)} MB (high-water mark ${fmt(serviceMemory.highWaterMarkMb ?? NaN, 0)} MB)`,
    );

    const report = {
      benchmark: 'service',
      startedAt,
      gitCommit: gitCommit(root),
      machine,
      loadAverage1mAtEnd: loadAverage1m(),
      settings: SETTINGS,
      database: seed.database.embedded ? 'embedded PostgreSQL (bench:seed data folder)' : 'external (DATABASE_URL)',
      registry: { size: seed.size, counts: seed.counts },
      lookupPlan: plan,
      results: byConnections,
      ratiosToBare: Object.fromEntries(
        Object.entries(byConnections).map(([c, rs]) => [
          c,
          Object.fromEntries(rs.slice(1).map((r) => [r.id, r.requestsPerSecond / (rs[0] as LoadResult).requestsPerSecond])),
        ]),
      ),
      rounds,
      submissionsAtRate,
      import: imported && { rows: SETTINGS.importRows, ...imported },
      dueScan,
      serviceMemory,
      targets: checks,
    };
    const files = writeResults(path.join(root, 'bench', 'results'), 'service', report);
    console.log(`\nwrote ${files.map((f) => path.relative(root, f)).join(' and ')}`);
    if (checks.some((c) => c.id.startsWith('errors-') && !c.pass)) process.exitCode = 1;
  } finally {
    for (const c of children) await stopProcess(c.child);
    await db.end();
    await server.stop();
  }
}

/** A limit is a maximum unless `kind` is 'min'. */
function check(id: string, description: string, actual: number, limit: number, kind: 'max' | 'min' = 'max'): Check {
  return { id, description, actual, limit, pass: kind === 'min' ? actual >= limit : actual < limit };
}

/** Starts a service instance with its scheduler on (5 s period) and times its first three passes over every lab. */
async function timeDueScan(
  db: Client,
  start: (port: number) => ReturnType<typeof startProcess>,
  children: ReturnType<typeof startProcess>[],
) {
  console.log('due-date scan: a service instance with its scheduler on…');
  const due = await db.query<{ items: string; labs: string }>(
    `SELECT count(*)::text AS items, count(DISTINCT lab_id)::text AS labs FROM due_dates`,
  );
  const notices = async () => Number((await db.query<{ n: string }>('SELECT count(*)::text AS n FROM notices')).rows[0]?.n ?? 0);
  const noticesBefore = await notices();
  const schedulerPort = await freePort();
  const scheduler = start(schedulerPort);
  children.push(scheduler);
  await waitForOk(`http://127.0.0.1:${schedulerPort}/health/ready`, 120_000);
  const passes = await duePasses(`http://127.0.0.1:${schedulerPort}/metrics`, 3, 600_000);
  await stopProcess(scheduler.child);
  const noticesRaised = (await notices()) - noticesBefore;
  const steadySeconds = Math.max(...passes.slice(1));
  console.log(
    `  ${due.rows[0]?.items} due dates in ${due.rows[0]?.labs} labs: first pass ${fmt(passes[0] ?? 0, 2)} s (${noticesRaised} notices raised in all), steady passes ${passes
      .slice(1)
      .map((s) => `${fmt(s, 2)} s`)
      .join(', ')}\n`,
  );
  return { dueDates: Number(due.rows[0]?.items), labs: Number(due.rows[0]?.labs), passesSeconds: passes, noticesRaised, steadySeconds };
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
