/**
 * Query plans at registry scale: `npm run bench:plans`.
 *
 * Builds the service in this process (the same factory as main.ts) on the registry
 * `npm run bench:seed` wrote (BENCH_SEED_FILE, default ./.data/bench-seed.json; size M for the
 * figures that matter), sends each request of bench/support/plan-battery.ts once, records the
 * statements it sent, and asks PostgreSQL for their plans with the planner's own choices. A
 * request whose plan reads a large table whole is listed as WHOLE-TABLE and makes the exit code 1.
 * Each request's time (one cold-ish call, a single client) is reported beside it.
 * Results: stdout, bench/results/plans-<date>.json and plans-latest.json.
 */
import 'reflect-metadata';

import { existsSync, readFileSync } from 'node:fs';
import { Writable } from 'node:stream';
import path from 'node:path';

import { createDatabase, openDatabaseServer } from '@registry/data';
import type { FastifyInstance } from 'fastify';
import { Client } from 'pg';

import { createApp } from '../apps/api/src/app.factory';
import { parseConfig } from '../apps/api/src/config/config.schema';
import { createLogger } from '../apps/api/src/logging';
import { planBatteryRequests, planWorld } from './support/plan-battery';
import { injectInto, planRequests, populatedLargeTables } from './support/query-plans';
import { findRepoRoot, formatTable, gitCommit, machineInfo, writeResults } from './support/report';

async function main(): Promise<void> {
  const startedAt = new Date().toISOString();
  const root = findRepoRoot(__dirname);
  const seedFile = path.resolve(root, process.env.BENCH_SEED_FILE ?? path.join('.data', 'bench-seed.json'));
  if (!existsSync(seedFile)) throw new Error(`${seedFile} is missing: run npm run bench:seed -- --size M first`);
  const seed = JSON.parse(readFileSync(seedFile, 'utf8')) as {
    size: string;
    database: { embedded: boolean; dataDir?: string };
    counts: Record<string, number>;
    credentialKey: string;
  };
  const external = process.env.DATABASE_URL;
  if (!seed.database.embedded && !external) throw new Error('the seed went to an external server: set DATABASE_URL to it');
  const server = await openDatabaseServer(
    seed.database.embedded ? { dataDir: seed.database.dataDir as string } : { url: external as string, dataDir: path.join(root, '.data') },
  );
  const owner = new Client({ connectionString: server.ownerUrl });
  await owner.connect();
  const config = parseConfig({
    NODE_ENV: 'production',
    LOG_LEVEL: 'warn',
    DATABASE_URL: server.url,
    SCHEDULER_ENABLED: 'false',
    DELIVERY_WORKER_PERIOD_MS: '0',
  });
  const database = createDatabase({ databaseUrl: server.url, poolMax: 4 });
  const quiet = new Writable({ write: (_chunk, _enc, done) => done() });
  const app = await createApp({ config, database, logger: createLogger(config, quiet) });
  try {
    await app.init();
    const fastify = app.getHttpAdapter().getInstance() as unknown as FastifyInstance;
    await fastify.ready();
    await owner.query('ANALYZE');
    const world = await planWorld(owner, seed.credentialKey);
    const send = injectInto(fastify);
    const requests = planBatteryRequests(world);
    // A first round warms the caches; the second is timed and explained.
    for (const r of requests) await send(r);
    const large = await populatedLargeTables(owner);
    const results = await planRequests(requests, send, owner, large);
    console.log(
      formatTable(
        ['request', 'status', 'ms', 'statements', 'whole-table scans'],
        results.map((r) => [
          r.label,
          String(r.status),
          r.ms.toFixed(1),
          String(r.statements.length),
          r.statements.flatMap((s) => s.scans.map((x) => `${x.node} ${x.table}`)).join(', ') || '-',
        ]),
      ),
    );
    const failing = results.filter((r) => r.status >= 400 || r.statements.some((s) => s.scans.length > 0));
    for (const r of failing) {
      console.log(`\n${r.status >= 400 ? `FAILED ${r.status}` : 'WHOLE-TABLE'}  ${r.label}  ${r.path}`);
      for (const s of r.statements.filter((x) => x.scans.length > 0))
        console.log(`  ${s.text.replace(/\s+/g, ' ').slice(0, 400)}\n    ${s.outline.join('\n    ')}`);
    }
    const report = {
      benchmark: 'plans',
      startedAt,
      gitCommit: gitCommit(root),
      machine: machineInfo(),
      registry: { size: seed.size, counts: seed.counts },
      largeTablesChecked: [...large].sort(),
      results,
    };
    const files = writeResults(path.join(root, 'bench', 'results'), 'plans', report);
    console.log(
      `\n${results.length} requests, ${failing.length} with a whole-table scan or a failure; wrote ${files.map((f) => path.relative(root, f)).join(' and ')}`,
    );
    if (failing.length > 0) process.exitCode = 1;
  } finally {
    await app.close();
    await database.close();
    await owner.end();
    await server.stop();
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
