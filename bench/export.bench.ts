/**
 * Export benchmark: `npm run bench:export`.
 *
 * Starts the built service (dist/apps/api/src/main.js) on a fresh database — an embedded
 * PostgreSQL in a temporary folder, or a new database on the server in DATABASE_URL (dropped
 * afterwards) — and seeds one lab with 1,000,000 calibrations by SQL (INSERT … SELECT over
 * generate_series, the due-date trigger switched off meanwhile). Then, in the same run and on the
 * same database, it times:
 *   - PostgreSQL's own `COPY (SELECT …) TO STDOUT WITH (FORMAT csv, HEADER)` of the calibration
 *     log's SELECT (the very query the service runs, parameters written in as literals);
 *   - POST /v1/exports (calibration-log, csv) through the service, the body read and discarded.
 * Each is run EXPORT_BENCH_ROUNDS times (2), interleaved; the best round of each is reported.
 * While the service exports, its resident set size is sampled every 50 ms (/proc, Linux); the
 * peak during the exports and the process's high-water mark (VmHWM) are reported.
 *
 * Targets: the service's rows/s ≥ 30 % of COPY's; its peak RSS < 256 MB. A missed target is
 * printed as MISSED; the exit code stays 0 (a report, not a gate), except when an export failed
 * or delivered a different number of rows than COPY.
 * Results go to stdout and to bench/results/export-<date>.json and export-latest.json.
 *
 * Settings: EXPORT_BENCH_ROWS (1000000), EXPORT_BENCH_ROUNDS (2), DATABASE_URL (external server;
 * needs CREATEDB).
 */
import { existsSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';

import { freePort } from '@registry/data';
import { Client } from 'pg';
import { to as copyTo } from 'pg-copy-streams';

import { newSessionToken } from '../apps/api/src/auth/tokens';
import { CALIBRATION_LOG_SQL } from '../apps/api/src/exports/report-sql';
import { openBenchDatabase } from './support/bench-database';
import { findRepoRoot, gitCommit, writeResults } from './support/report';
import { memoryOf, startProcess, stopProcess, waitForOk, serviceEnv } from './support/factors-load';

const int = (name: string, fallback: number) => {
  const v = Number(process.env[name] ?? fallback);
  if (!Number.isInteger(v) || v <= 0) throw new Error(`${name} must be a positive integer`);
  return v;
};
const SETTINGS = { rows: int('EXPORT_BENCH_ROWS', 1_000_000), rounds: int('EXPORT_BENCH_ROUNDS', 2), vessels: 500, analysts: 25 };
const TARGET_RATIO = 0.3;
const TARGET_RSS_MB = 256;
const PERIOD = { from: '2020-01-01T00:00:00.000Z', to: '2030-01-01T00:00:00.000Z', asOf: '2026-12-01T00:00:00.000Z' };

/** One lab, its analysts, vessels, a balance and a thermometer, an administrator with a session; calibrations by SQL. */
async function seed(ownerUrl: string, rows: number): Promise<{ token: string; labId: string }> {
  const c = new Client({ connectionString: ownerUrl });
  await c.connect();
  try {
    const { token, hash } = newSessionToken();
    const lab = await c.query<{ id: string }>(
      `INSERT INTO labs (code, name, time_zone) VALUES ('DW-CHEM', 'Drinking-water chemistry', 'Europe/Vienna') RETURNING id`,
    );
    const labId = lab.rows[0]?.id as string;
    const admin = await c.query<{ id: string }>(
      `INSERT INTO people (email, display_name, registry_role) VALUES ('registry.admin@waterworks.example', 'Registry Admin', 'administrator') RETURNING id`,
    );
    await c.query(`INSERT INTO sessions (person_id, token_hash, expires_at) VALUES ($1, $2, now() + interval '12 hours')`, [
      admin.rows[0]?.id,
      Buffer.from(hash),
    ]);
    await c.query(
      `INSERT INTO people (email, display_name) SELECT 'analyst' || n || '@waterworks.example', 'Analyst ' || n FROM generate_series(1, $1) n`,
      [SETTINGS.analysts],
    );
    await c.query(
      `INSERT INTO vessels (lab_id, asset_tag, kind, delivery_mode, nominal_volume_ml, accuracy_class, expansion_coefficient_per_k, limit_ml, limit_source)
       SELECT $1, 'PIP-25-' || lpad(n::text, 4, '0'), 'one-mark-pipette', 'deliver', 25, 'A', 0.0000099, 0.03, 'class-table'
         FROM generate_series(1, $2) n`,
      [labId, SETTINGS.vessels],
    );
    await c.query(`INSERT INTO balances (lab_id, asset_tag, capacity_g, readability_g) VALUES ($1, 'BAL-01', 220, 0.0001)`, [labId]);
    await c.query(`INSERT INTO instruments (lab_id, asset_tag, kind) VALUES ($1, 'TH-01', 'thermometer')`, [labId]);
    // The due-date trigger recomputes a vessel's due date per row: off while seeding, then one refresh.
    await c.query('ALTER TABLE calibrations DISABLE TRIGGER due_track');
    await c.query(
      `WITH v AS (SELECT array_agg(id ORDER BY asset_tag) AS ids FROM vessels),
            p AS (SELECT array_agg(id ORDER BY email) AS ids FROM people WHERE email LIKE 'analyst%'),
            b AS (SELECT id FROM balances), t AS (SELECT id FROM instruments)
       INSERT INTO calibrations (lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                 delivery_mode, air_temperature_c, air_pressure_pa, air_humidity_percent, inputs, results, verdict,
                                 library_version, submitted_at, reviewer_id, reviewed_at, created_at)
       SELECT $1, v.ids[1 + n % cardinality(v.ids)], p.ids[1 + n % cardinality(p.ids)], p.ids[1 + n % cardinality(p.ids)], b.id, t.id,
              'approved', timestamptz '2021-01-01T00:00:00Z' + n * interval '2 minutes', 'deliver', 21.5, 98650.00, 41.0,
              jsonb_build_object('points', jsonb_build_array(jsonb_build_object('nominalVolumeMl', '25', 'replicates', jsonb_build_array(
                jsonb_build_object('beforeG', '0.0000', 'afterG', (24.9 + (n % 97) / 1000.0)::text, 'waterTemperatureC', '20.4'),
                jsonb_build_object('beforeG', '0.0000', 'afterG', (24.9 + (n % 89) / 1000.0)::text, 'waterTemperatureC', '20.5'))))),
              jsonb_build_object('meanVolumeMl', (25 + (n % 41 - 20) / 1000.0)::text, 'expandedUncertaintyMl', '0.012'),
              CASE WHEN n % 50 = 0 THEN 'fail' ELSE 'pass' END, 'bench',
              timestamptz '2021-01-01T00:05:00Z' + n * interval '2 minutes', p.ids[1 + (n + 1) % cardinality(p.ids)],
              timestamptz '2021-01-01T01:00:00Z' + n * interval '2 minutes', timestamptz '2021-01-01T00:00:00Z'
         FROM generate_series(1, $2) n, v, p, b, t`,
      [labId, rows],
    );
    await c.query('ALTER TABLE calibrations ENABLE TRIGGER due_track');
    await c.query('ANALYZE');
    return { token, labId };
  } finally {
    await c.end();
  }
}

const literal = (v: unknown) =>
  v === true ? 'true' : v === false ? 'false' : Array.isArray(v) ? `'{${v.join(',')}}'::uuid[]` : `'${String(v).replace(/'/g, "''")}'`;

/** The calibration log's SELECT with its parameters written in (COPY takes no parameters). */
function copyStatement(labId: string): string {
  const params: unknown[] = [false, [labId], PERIOD.from, PERIOD.to, PERIOD.asOf];
  const sql = CALIBRATION_LOG_SQL.replace(/\$(\d)/g, (_m, n: string) => literal(params[Number(n) - 1]));
  return `COPY (${sql}) TO STDOUT WITH (FORMAT csv, HEADER)`;
}

interface Run {
  readonly rows: number;
  readonly bytes: number;
  readonly seconds: number;
  readonly rowsPerSecond: number;
}

async function timeCopy(url: string, labId: string): Promise<Run> {
  const c = new Client({ connectionString: url });
  await c.connect();
  try {
    const started = process.hrtime.bigint();
    const stream = c.query(copyTo(copyStatement(labId)));
    let bytes = 0;
    let lines = 0;
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      bytes += chunk.length;
      for (let i = chunk.indexOf(10); i !== -1; i = chunk.indexOf(10, i + 1)) lines++;
    }
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return { rows: lines - 1, bytes, seconds, rowsPerSecond: (lines - 1) / seconds };
  } finally {
    await c.end();
  }
}

async function timeService(
  port: number,
  token: string,
  labId: string,
  pid: number | undefined,
): Promise<Run & { peakRssMb: number | null; exportId: string }> {
  let peak: number | null = null;
  const sampler = setInterval(() => {
    const m = memoryOf(pid);
    if (m) peak = Math.max(peak ?? 0, m.rssMb);
  }, 50);
  const body = JSON.stringify({ report: 'calibration-log', format: 'csv', labIds: [labId], ...PERIOD });
  const started = process.hrtime.bigint();
  try {
    const { bytes, lines, exportId } = await new Promise<{ bytes: number; lines: number; exportId: string }>((resolve, reject) => {
      const req = http.request(
        {
          host: '127.0.0.1',
          port,
          method: 'POST',
          path: '/v1/exports',
          headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
        },
        (res) => {
          if (res.statusCode !== 200) {
            res.resume();
            return reject(new Error(`POST /v1/exports answered ${res.statusCode}`));
          }
          let n = 0;
          let l = 0;
          res.on('data', (chunk: Buffer) => {
            n += chunk.length;
            for (let i = chunk.indexOf(10); i !== -1; i = chunk.indexOf(10, i + 1)) l++;
          });
          res.on('end', () => resolve({ bytes: n, lines: l, exportId: String(res.headers['export-id']) }));
          res.on('error', reject);
        },
      );
      req.on('error', reject);
      req.end(body);
    });
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return { rows: lines - 1, bytes, seconds, rowsPerSecond: (lines - 1) / seconds, peakRssMb: peak, exportId };
  } finally {
    clearInterval(sampler);
  }
}

const fmt = (n: number, digits = 0) => n.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: digits });

async function main(): Promise<void> {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const serviceMain = path.join(root, 'dist', 'apps', 'api', 'src', 'main.js');
  if (!existsSync(serviceMain)) throw new Error(`${serviceMain} is missing: run npm run build first`);
  const cpus = os.cpus();
  const loadAtStart = os.loadavg()[0] ?? 0;
  console.log(`export benchmark: ${cpus[0]?.model.trim() ?? 'unknown cpu'}, ${cpus.length} cores, node ${process.version}`);
  console.log(`${fmt(SETTINGS.rows)} calibrations, ${SETTINGS.rounds} rounds of COPY and of the service, interleaved\n`);

  const tmp = await mkdtemp(path.join(os.tmpdir(), 'registry-bench-'));
  const database = await openBenchDatabase(tmp);
  let service: ReturnType<typeof startProcess> | null = null;
  try {
    const seedStart = Date.now();
    const { token, labId } = await seed(database.server.ownerUrl, SETTINGS.rows);
    console.log(`seeded ${fmt(SETTINGS.rows)} calibrations in ${fmt((Date.now() - seedStart) / 1000, 1)} s`);

    const port = await freePort();
    service = startProcess(serviceMain, serviceEnv(port, database.server));
    const child = service;
    await waitForOk(`http://127.0.0.1:${port}/health/ready`).catch((err: Error) => {
      throw new Error(`${err.message}\n${child.stderr()}`);
    });
    const pid = service.child.pid;
    const idle = memoryOf(pid);
    console.log(`service ready; RSS ${idle ? fmt(idle.rssMb, 1) : '?'} MB before exporting\n`);

    const copies: Run[] = [];
    const services: Awaited<ReturnType<typeof timeService>>[] = [];
    for (let round = 1; round <= SETTINGS.rounds; round++) {
      const copy = await timeCopy(database.server.url, labId);
      copies.push(copy);
      console.log(
        `  round ${round} COPY:    ${fmt(copy.rows)} rows, ${fmt(copy.bytes / 1e6, 1)} MB in ${fmt(copy.seconds, 2)} s = ${fmt(copy.rowsPerSecond)} rows/s`,
      );
      const svc = await timeService(port, token, labId, pid);
      services.push(svc);
      console.log(
        `  round ${round} service: ${fmt(svc.rows)} rows, ${fmt(svc.bytes / 1e6, 1)} MB in ${fmt(svc.seconds, 2)} s = ${fmt(svc.rowsPerSecond)} rows/s, ` +
          `peak RSS ${svc.peakRssMb === null ? '?' : fmt(svc.peakRssMb, 1)} MB`,
      );
    }
    const best = <T extends Run>(runs: readonly T[]) => [...runs].sort((a, b) => b.rowsPerSecond - a.rowsPerSecond)[0] as T;
    const copy = best(copies);
    const svc = best(services);
    const ratio = svc.rowsPerSecond / copy.rowsPerSecond;
    const peakRss = Math.max(...services.map((s) => s.peakRssMb ?? 0));
    const hwm = memoryOf(pid)?.hwmMb ?? null;
    await new Promise((resolve) => setTimeout(resolve, 500));
    const recorded = await (async () => {
      const c = new Client({ connectionString: database.server.ownerUrl });
      await c.connect();
      try {
        const r = await c.query<{ state: string; row_count: string; byte_count: string; sha256: string | null }>(
          `SELECT state, row_count::text, byte_count::text, encode(sha256, 'hex') AS sha256 FROM exports WHERE id = $1`,
          [svc.exportId],
        );
        return r.rows[0] ?? null;
      } finally {
        await c.end();
      }
    })();
    const sameRows = services.every((s) => s.rows === copy.rows) && copy.rows === SETTINGS.rows;
    const checks = [
      { id: 'throughput', description: `service ≥ ${TARGET_RATIO * 100} % of COPY's rows/s`, actual: ratio, pass: ratio >= TARGET_RATIO },
      {
        id: 'peak-rss',
        description: `service peak RSS while exporting < ${TARGET_RSS_MB} MB`,
        actual: peakRss,
        pass: peakRss < TARGET_RSS_MB,
      },
      { id: 'rows', description: 'every export delivered the rows COPY did', actual: sameRows ? 1 : 0, pass: sameRows },
      {
        id: 'recorded',
        description: 'the export is recorded completed with its SHA-256',
        actual: recorded?.state === 'completed' ? 1 : 0,
        pass: recorded?.state === 'completed' && recorded.sha256 !== null,
      },
    ];
    console.log(`\nCOPY     ${fmt(copy.rowsPerSecond)} rows/s (${fmt(copy.bytes / copy.seconds / 1e6, 1)} MB/s)`);
    console.log(`service  ${fmt(svc.rowsPerSecond)} rows/s (${fmt(svc.bytes / svc.seconds / 1e6, 1)} MB/s), ${fmt(100 * ratio)} % of COPY`);
    console.log(
      `service  peak RSS while exporting ${fmt(peakRss, 1)} MB; process high-water mark ${hwm === null ? '?' : fmt(hwm, 1)} MB\n`,
    );
    for (const c of checks)
      console.log(
        `${c.pass ? 'PASS  ' : 'MISSED'}  ${c.description}: ${c.id === 'throughput' ? `${fmt(100 * c.actual)} %` : fmt(c.actual, 1)}`,
      );

    const report = {
      benchmark: 'export',
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
      rounds: { copy: copies, service: services },
      best: { copy, service: svc },
      ratioToCopy: ratio,
      serviceRssMb: { idle: idle?.rssMb ?? null, peakWhileExporting: peakRss, highWaterMark: hwm },
      recorded,
      targets: checks,
    };
    const files = writeResults(path.join(root, 'bench', 'results'), 'export', report);
    console.log(`\nwrote ${files.map((f) => path.relative(root, f)).join(' and ')}`);
    if (!sameRows || recorded?.state !== 'completed') process.exitCode = 1;
  } finally {
    if (service) await stopProcess(service.child);
    await database.close();
    await rm(tmp, { recursive: true, force: true });
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
