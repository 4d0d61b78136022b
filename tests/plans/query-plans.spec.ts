import { Client } from 'pg';

import { planBatteryRequests, planWorld } from '../../bench/support/plan-battery';
import { injectInto, LARGE_TABLES, type PlanNode, planRequests, type RequestPlans, tableScans } from '../../bench/support/query-plans';
import { seedRegistry } from '../../bench/seed/run';
import { SIZES } from '../../bench/seed/sizes';
import { startTestApp, type TestApp } from '../support/test-app';

/*
 * Every hot path (bench/support/plan-battery.ts: each list with its filters and sorts, the due
 * list, notices, audit trail, factor lookups by every identifier form) is sent once to the real
 * service; each read statement it sends is explained with sequential scans switched off. The
 * planner then uses an index wherever one can serve the statement, so a sequential scan of a
 * large table that remains — or an index read whole with no condition and no Limit — means no
 * index serves it: at 100,000 vessels and 1,000,000 calibrations that request would read the
 * table. (`npm run bench:plans` checks the planner's own choices on a size-M registry.)
 */
// The history ends at today's midnight (UTC), so the factors it issued are in force now.
const AS_OF = new Date(Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate()));

describe('query plans of the hot paths', () => {
  let t: TestApp;
  let db: Client;
  let results: RequestPlans[];

  beforeAll(async () => {
    t = await startTestApp();
    const seeded = await seedRegistry(t.testDatabase.url, {
      size: SIZES.XS,
      seed: 11,
      asOf: AS_OF,
      templatesPerModel: 4,
      batchVessels: 25,
      samplePairs: 5,
    });
    db = new Client({ connectionString: t.testDatabase.url });
    await db.connect();
    const world = await planWorld(db, seeded.credentialKey);
    await db.query('SET enable_seqscan = off');
    const fastify = t.app.getHttpAdapter().getInstance();
    const send = injectInto(fastify);
    results = await planRequests(planBatteryRequests(world), send, db);
  }, 180_000);
  afterAll(async () => {
    await db?.end();
    await t?.close();
  });

  it('answers every request of the battery (a plan of an error path proves nothing)', () => {
    expect(results.filter((r) => r.status >= 300).map((r) => `${r.status} ${r.label} ${r.path}`)).toEqual([]);
    expect(results.length).toBeGreaterThanOrEqual(40);
  });

  it('records the statements each request sends', () => {
    expect(results.filter((r) => r.statements.length === 0).map((r) => r.label)).toEqual([]);
  });

  it('reads no large table whole in any of them', () => {
    const whole = results.flatMap((r) =>
      r.statements
        .filter((s) => s.scans.length > 0)
        .map(
          (s) =>
            `${r.label}: ${s.scans.map((x) => `${x.node} ${x.table}`).join(', ')}\n  ${s.text.replace(/\s+/g, ' ').slice(0, 300)}\n    ${s.outline.join('\n    ')}`,
        ),
    );
    expect(whole).toEqual([]);
  });

  it('would notice a whole-table read (the check itself can fail)', async () => {
    const scansOf = async (sql: string) => {
      const { rows } = await db.query<{ 'QUERY PLAN': [{ Plan: PlanNode }] }>(`EXPLAIN (FORMAT JSON) ${sql}`);
      return tableScans((rows[0] as { 'QUERY PLAN': [{ Plan: PlanNode }] })['QUERY PLAN'][0].Plan).map((s) => `${s.node} ${s.table}`);
    };
    // No index on notes: the table is read whatever the planner is told.
    expect(await scansOf(`SELECT id FROM calibrations WHERE notes LIKE '%x%'`)).toEqual(['Seq Scan calibrations']);
    // A page in an order no index has: the whole table is read, then sorted, Limit or not.
    expect(await scansOf(`SELECT id FROM calibrations ORDER BY notes, id LIMIT 50`)).toEqual(['Seq Scan calibrations']);
    // The same page in the order of an index stops after 50 entries.
    expect(await scansOf(`SELECT id FROM calibrations ORDER BY performed_at DESC, id DESC LIMIT 50`)).toEqual([]);
    expect(LARGE_TABLES.has('calibrations')).toBe(true);
  });
});
