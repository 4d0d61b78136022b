import { Client } from 'pg';

import { hashPassword } from '../../apps/api/src/sessions/password-hashing';
import { buildVesselTypes } from './calibration-templates';
import { VESSEL_MODELS } from './catalogue';
import { REFRESH_STATISTICS_AFTER, planChecks, refreshStatistics, seedChecks } from './checks-loader';
import { AUDIT_COLUMNS, CALIBRATION_COLUMNS, FACTOR_COLUMNS, VESSEL_COLUMNS, auditRows } from './columns';
import { copyChunks, serializeRows } from './copy-writer';
import { type HistoryContext, buildBatch, calibrationCounts } from './history';
import { seedPeopleAndItems } from './items-loader';
import { Progress } from './progress';
import { SeededRandom } from './random';
import type { SeedSize } from './sizes';
import { buildWorld } from './world';

/*
 * Fills an empty, migrated registry. Everything goes in with COPY, with every constraint,
 * index and trigger of the migrations in place; audit entries go through the chaining
 * trigger like any insert. Randomness comes from the seed only, so the same seed and as-of
 * date give the same rows, except what the database or a secret decides: audit times and
 * hashes, the credential key and password hashes.
 */

export interface SeedOptions {
  readonly size: SeedSize;
  readonly seed: number;
  readonly asOf: Date;
  /** Calibration runs computed per vessel model. */
  readonly templatesPerModel: number;
  /** Vessels per batch of history. */
  readonly batchVessels: number;
  /** How many (person, vessel) pairs with a current factor to hand to benchmarks. */
  readonly samplePairs: number;
}

export interface SeedResult {
  readonly credentialKey: string;
  readonly password: string;
  readonly signIn: { readonly email: string; readonly role: string; readonly lab: string | null }[];
  readonly labs: { readonly id: string; readonly code: string }[];
  readonly pairs: { personId: string; email: string; vesselId: string; assetTag: string; indicatedVolumeMl: string }[];
  readonly templates: number;
}

const FACTOR_VALIDITY_DAYS = 365;

/** Connections: one writes the audit trail (in batch order, so the chain's order is the seed's), two the data. */
const DATA_CONNECTIONS = 2;

async function connect(url: string): Promise<Client> {
  const client = new Client({ connectionString: url });
  await client.connect();
  // A crash loses at most the last moments of the load; nothing else changes.
  await client.query('SET synchronous_commit = off');
  // The due-date trigger looks its subject up in one view over every kind of item (due_computed): a custom
  // plan for each row replans the whole view (about 5 ms a row here); the generic plan is reused (under 1 ms).
  // Same rows and results, planned once per connection.
  await client.query('SET plan_cache_mode = force_generic_plan');
  return client;
}

export async function seedRegistry(ownerUrl: string, o: SeedOptions): Promise<SeedResult> {
  const db = await connect(ownerUrl);
  const data: Client[] = [];
  try {
    for (let i = 0; i < DATA_CONNECTIONS; i++) data.push(await connect(ownerUrl));
    return await seedWith(db, data, o);
  } finally {
    for (const c of [db, ...data]) await c.end();
  }
}

async function seedWith(db: Client, data: readonly Client[], o: SeedOptions): Promise<SeedResult> {
  const { rows } = await db.query<{ n: string }>('SELECT count(*)::text AS n FROM labs');
  if (rows[0]?.n !== '0') throw new Error('the database already holds labs: seed an empty registry (a fresh data folder or database)');
  const rnd = new SeededRandom(o.seed);
  const world = buildWorld(o.size, o.asOf, rnd);
  const started = Date.now();
  const types = buildVesselTypes(VESSEL_MODELS, o.templatesPerModel, rnd.fork('templates'));
  const templates = types.reduce((n, t) => n + t.templates.length, 0);
  console.error(`computed ${templates} calibration runs with the metrology library in ${Date.now() - started} ms`);
  planChecks(world, o.size.balanceChecks, rnd.fork('check-plan'));

  const password = `bench-${new SeededRandom(o.seed ^ 0x5eed).uuid().slice(0, 18)}`;
  const passwordHash = await hashPassword(password);
  const credential = await seedPeopleAndItems(db, world, passwordHash);
  await seedChecks(db, world, o.size.balanceChecks, rnd);

  const ctx: HistoryContext = {
    world,
    types,
    typeWeights: types.map((t) => [t, t.model.weight] as const),
    labWeights: world.labs.map((l, i) => [l, i < 3 ? 2 : 1] as const),
    tagCounters: new Map(),
    factorValidityDays: FACTOR_VALIDITY_DAYS,
    pairEvery: Math.max(1, Math.floor((o.size.vessels * 1.5) / o.samplePairs)),
    pairCounter: { n: 0 },
  };
  const counts = calibrationCounts(o.size.calibrations, o.size.vessels, rnd.fork('counts'));
  const history = rnd.fork('history');
  const ids = rnd.fork('history-ids');
  const pairs: SeedResult['pairs'] = [];
  const bar = new Progress('calibrations', o.size.calibrations, 'calibrations');
  // A pipeline: batches are generated here in order; each goes to the next data connection (its vessels,
  // calibrations and factors), then its audit entries to the audit connection, in batch order.
  const dataTasks: Promise<void>[] = data.map(() => Promise.resolve());
  const auditTasks: Promise<void>[] = [];
  let auditTail: Promise<void> = Promise.resolve();
  const handled = (p: Promise<void>) => {
    p.catch(() => undefined);
    return p;
  };
  let index = 0;
  for (let from = 0; from < o.size.vessels; from += o.batchVessels, index++) {
    const slot = index % data.length;
    await dataTasks[slot];
    if (index > 2 * data.length) await auditTasks[index - 2 * data.length];
    const to = Math.min(o.size.vessels, from + o.batchVessels);
    const parts = [];
    for (let start = from; start < to; start += 50) {
      parts.push(buildBatch(ctx, counts, start, Math.min(to, start + 50), history, ids));
      // Let the connections stream while the batch is built.
      await new Promise((resolve) => setImmediate(resolve));
    }
    const vessels = serializeRows(parts.flatMap((b) => b.vessels));
    const calibrations = serializeRows(parts.flatMap((b) => b.calibrations));
    const factors = serializeRows(parts.flatMap((b) => b.factors));
    const audit = serializeRows(auditRows(parts.flatMap((b) => b.audit)));
    for (const p of parts.flatMap((b) => b.currentPairs)) {
      if (pairs.length < o.samplePairs) {
        pairs.push({
          personId: p.person.id,
          email: p.person.email,
          vesselId: p.vesselId,
          assetTag: p.assetTag,
          indicatedVolumeMl: p.indicatedVolumeMl,
        });
      }
    }
    const conn = data[slot] as Client;
    const done = handled(
      (async () => {
        await copyChunks(conn, 'vessels', VESSEL_COLUMNS, vessels);
        await copyChunks(conn, 'calibrations', CALIBRATION_COLUMNS, calibrations);
        bar.tick(calibrations.count);
        await copyChunks(conn, 'factors', FACTOR_COLUMNS, factors);
      })(),
    );
    dataTasks[slot] = done;
    auditTail = handled(Promise.all([auditTail, done]).then(() => copyChunks(db, 'audit_entries', AUDIT_COLUMNS, audit)));
    if (REFRESH_STATISTICS_AFTER.has(index)) auditTail = handled(auditTail.then(() => refreshStatistics(db)));
    auditTasks.push(auditTail);
  }
  await Promise.all([...dataTasks, auditTail]);
  bar.finish();
  const analyzed = Date.now();
  await db.query('ANALYZE');
  console.error(`ANALYZE in ${Date.now() - analyzed} ms`);
  return {
    credentialKey: credential,
    password,
    signIn: world.people
      .filter((p) => p.signsIn)
      .map((p) => ({
        email: p.email,
        role: p.registryRole ?? 'manager',
        lab: p.memberships[0] ? (world.labs.find((l) => l.id === p.memberships[0]?.labId)?.code ?? null) : null,
      })),
    labs: world.labs.map((l) => ({ id: l.id, code: l.code })),
    pairs,
    templates,
  };
}
