import { Client, Pool } from 'pg';

import { seedRegistry } from '../../bench/seed/run';
import { SIZES } from '../../bench/seed/sizes';
import { checkBalances, drive, type DriverResult } from '../../bench/soak/driver';
import { checkInvariants } from '../../bench/soak/invariants';
import { summarize, verdict } from '../../bench/soak/summary';
import { soakWorld } from '../../bench/soak/world';
import { createTestDatabase, type TestDatabase } from '../support/test-database';
import { type ServiceProcess, startServiceProcess } from './support/service-process';

/**
 * The soak run (`npm run soak`, bench/soak.ts) in short: the built service as its own process
 * on a size-XS registry, mixed traffic from 16 clients for 15 s — factor lookups and
 * corrections, vessel pages, calibrations created, submitted and approved under four-eyes —
 * then the database checked by SQL. Every request is valid, so every answer is a 2xx; the
 * rows written are exactly the writes acknowledged; the registry's invariants hold.
 * `npm run test:faults` runs it for 60 s at 64 clients (RELIABILITY_LONG=1).
 */
const LONG = process.env.RELIABILITY_LONG === '1';
const DURATION_MS = LONG ? 60_000 : 15_000;
const CLIENTS = LONG ? 64 : 16;
// The history ends at today's midnight (UTC), so the factors it issued are in force now.
const AS_OF = new Date(Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate()));

describe('soak (short): mixed traffic against the service process, then the invariants by SQL', () => {
  let db: TestDatabase;
  let owner: Client;
  let pool: Pool;
  let svc: ServiceProcess | undefined;
  let since: Date;
  let run: DriverResult;

  beforeAll(async () => {
    db = await createTestDatabase();
    const seeded = await seedRegistry(db.url, {
      size: SIZES.XS,
      seed: 3,
      asOf: AS_OF,
      templatesPerModel: 4,
      batchVessels: 25,
      samplePairs: 5,
    });
    owner = new Client({ connectionString: db.url });
    await owner.connect();
    pool = new Pool({ connectionString: db.url, max: 2 });
    const world = await soakWorld(owner, seeded.credentialKey);
    svc = await startServiceProcess({ databaseUrl: db.appUrl, migrationUrl: db.url, readyTimeoutMs: 60_000 });
    await checkBalances(svc.baseUrl, world, new Date(Date.now() - 120_000));
    since = (await owner.query<{ now: Date }>('SELECT now() AS now')).rows[0]!.now;
    run = await drive(world, { baseUrl: svc.baseUrl, connections: CLIENTS, durationMs: DURATION_MS, maxRequests: 200_000 });
  }, DURATION_MS + 120_000);
  afterAll(async () => {
    await svc?.kill();
    await owner?.end();
    await pool?.end();
    await db?.drop();
  });

  it('answers every request with a 2xx: no 5xx, no refusal, no request without an answer', () => {
    const operations = summarize(run);
    const byKind = Object.fromEntries(operations.map((o) => [o.kind, { requests: o.requests, non2xx: o.non2xx }]));
    console.log(
      `soak (short): ${run.requests} requests in ${(run.elapsedMs / 1000).toFixed(1)} s; ` +
        operations.map((o) => `${o.kind} ${o.requests} (p99 ${o.latencyMs.p99.toFixed(0)} ms)`).join(', '),
    );
    expect({ unexpected: run.unexpected.slice(0, 3), transportErrors: run.transportErrors }).toEqual({
      unexpected: [],
      transportErrors: 0,
    });
    for (const o of operations)
      expect({ kind: o.kind, non2xx: o.non2xx, some: o.requests > 0 }).toEqual({ kind: o.kind, non2xx: 0, some: true });
    expect(byKind['calibration-approve']?.requests).toBeGreaterThan(0);
  });

  it('leaves the database consistent with what was acknowledged: rows, factors, audit chain', async () => {
    const invariants = await checkInvariants(pool, since, run);
    expect(invariants.filter((c) => !c.pass)).toEqual([]);
    expect(invariants.map((c) => c.id)).toEqual([
      'one-current-factor',
      'approved-pairs-current',
      'factor-matches-calibration',
      'audit-chain',
      'calibrations-created',
      'calibrations-submitted',
      'calibrations-approved',
      'verdicts-as-answered',
      'factors-issued',
      'audit-per-write',
    ]);
    expect(verdict(summarize(run), run, invariants)).toEqual({ pass: true, failures: [] });
  });

  it('fails its checks when the record and the database disagree', async () => {
    // The same database, with one acknowledged calibration left out of the record: the rows no longer match.
    const [first, ...rest] = run.calibrations;
    expect(first?.factorId).toEqual(expect.any(String));
    const short = await checkInvariants(pool, since, { ...run, calibrations: rest });
    // And with an approval that named another factor than the one stored.
    const renamed = await checkInvariants(pool, since, {
      ...run,
      calibrations: [{ ...first!, factorId: rest.find((c) => c.factorId)?.factorId ?? null }, ...rest],
    });
    const passed = (checks: typeof short, id: string) => checks.find((c) => c.id === id)?.pass;
    expect({
      created: passed(short, 'calibrations-created'),
      audit: passed(short, 'audit-per-write'),
      factors: passed(renamed, 'factors-issued'),
      chain: passed(renamed, 'audit-chain'),
    }).toEqual({ created: false, audit: false, factors: false, chain: true });
  });
});
