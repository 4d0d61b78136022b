/**
 * Realistic data for benchmarks: `npm run bench:seed -- --size S|M|L` (see bench/seed/options.ts).
 *
 * Fills an empty registry — the embedded PostgreSQL in ./.data/bench (a data folder of its own),
 * or the server in DATABASE_URL — with the water authority's labs scaled up: people and
 * memberships, balances, reference weights, instruments, vessels, years of balance checks and
 * calibrations as the service computes them, the factors their approvals issued and the audit
 * trail. Migrations are applied first; every constraint and trigger stays on.
 *
 * Prints the row count of every table and the elapsed time; writes the service credential's
 * key, the sign-in password of the administrator and managers, and a sample of (person,
 * vessel) pairs with a current factor to --out (default ./.data/bench-seed.json, not committed).
 */
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';

import { openDatabaseServer, redact } from '@registry/data';
import { Client, Pool } from 'pg';

import { verifyChain } from '../apps/api/src/audit-trail/chain-verifier';
import { COPY_TIMES } from './seed/copy-writer';
import { USAGE, UsageError, parseOptions } from './seed/options';
import { seedRegistry } from './seed/run';

const TABLES = [
  'labs',
  'people',
  'lab_memberships',
  'service_credentials',
  'balances',
  'reference_weights',
  'instruments',
  'vessels',
  'balance_checks',
  'calibrations',
  'factors',
  'audit_entries',
];

async function main(): Promise<void> {
  const o = parseOptions(process.argv.slice(2), new Date());
  const external = process.env.DATABASE_URL;
  if (o.reset && !external && existsSync(o.dataDir)) rmSync(o.dataDir, { recursive: true, force: true });
  if (!external) mkdirSync(path.dirname(path.resolve(o.dataDir)), { recursive: true });
  const started = Date.now();
  const server = await openDatabaseServer({
    ...(external ? { url: external } : {}),
    ...(process.env.DATABASE_MIGRATION_URL ? { migrationUrl: process.env.DATABASE_MIGRATION_URL } : {}),
    dataDir: path.resolve(o.dataDir),
    log: (m) => console.error(m),
  });
  console.log(
    `bench:seed size ${o.sizeName}, seed ${o.seed}, as of ${o.asOf.toISOString().slice(0, 10)}: ${server.embedded ? server.description : redact(server.url)}`,
  );
  const db = new Client({ connectionString: server.ownerUrl });
  await db.connect();
  try {
    const result = await seedRegistry(server.ownerUrl, {
      size: o.size,
      seed: o.seed,
      asOf: o.asOf,
      templatesPerModel: 16,
      batchVessels: 500,
      samplePairs: 1000,
    });
    const elapsedS = (Date.now() - started) / 1000;
    const counts: Record<string, number> = {};
    for (const table of TABLES) {
      const { rows } = await db.query<{ n: string }>(`SELECT count(*)::text AS n FROM ${table}`);
      counts[table] = Number(rows[0]?.n ?? 0);
    }
    const width = Math.max(...TABLES.map((t) => t.length));
    const rate = (t: string) => {
      const c = COPY_TIMES.get(t);
      return c && c.ms > 0
        ? `${Math.round((c.rows * 1000) / c.ms)
            .toLocaleString('en-US')
            .padStart(9)} rows/s while copying (${(c.ms / 1000).toFixed(1)} s)`
        : '';
    };
    console.log(
      `\n${TABLES.map((t) => `  ${t.padEnd(width)}  ${(counts[t] ?? 0).toLocaleString('en-US').padStart(12)}  ${rate(t)}`).join('\n')}`,
    );
    console.log(`\nseeded in ${elapsedS.toFixed(1)} s (${result.templates} computed calibration runs reused)`);
    if (o.verify) {
      const pool = new Pool({ connectionString: server.ownerUrl, max: 1 });
      const t = Date.now();
      const report = await verifyChain(pool).finally(() => pool.end());
      console.log(
        `audit chain ${report.intact ? 'intact' : `BROKEN at ${JSON.stringify(report.firstBroken)}`}: ${report.entriesChecked} entries in ${((Date.now() - t) / 1000).toFixed(1)} s`,
      );
      if (!report.intact) process.exitCode = 1;
    }
    mkdirSync(path.dirname(path.resolve(o.out)), { recursive: true });
    const out = {
      size: o.sizeName,
      seed: o.seed,
      asOf: o.asOf.toISOString().slice(0, 10),
      database: server.embedded ? { embedded: true, dataDir: path.resolve(o.dataDir) } : { embedded: false, url: redact(server.url) },
      elapsedSeconds: elapsedS,
      counts,
      credentialKey: result.credentialKey,
      password: result.password,
      signIn: result.signIn,
      labs: result.labs,
      pairs: result.pairs,
    };
    writeFileSync(o.out, `${JSON.stringify(out, null, 2)}\n`, { mode: 0o600 });
    console.log(`credential key, sign-in password and ${result.pairs.length} (person, vessel) pairs written to ${o.out}`);
  } finally {
    await db.end();
    await server.stop();
  }
}

main().catch((err: unknown) => {
  if (err instanceof UsageError) {
    if (err.message) console.error(err.message);
    console.error(USAGE);
    process.exit(2);
  }
  console.error(err);
  process.exit(1);
});
