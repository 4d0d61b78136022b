import { Decimal } from '@registry/metrology';
import { Client, Pool } from 'pg';

import { verifyChain } from '../../apps/api/src/audit-trail/chain-verifier';
import { computeCalibration } from '../../apps/api/src/calibrations/calibration-computation';
import { CalibrationInputsSchema, CalibrationResultsSchema } from '../../apps/api/src/calibrations/calibration.responses';
import { ManualClock } from '../../apps/api/src/common/clock';
import { type SeedResult, seedRegistry } from '../../bench/seed/run';
import { SIZES } from '../../bench/seed/sizes';
import { startTestApp, type TestApp } from '../support/test-app';
import { createTestDatabase, type TestDatabase } from '../support/test-database';

// npm run bench:seed: the generated registry keeps every rule of the database and of the service.
const AS_OF = new Date('2026-03-02T00:00:00Z');
const OPTIONS = { size: SIZES.XS, seed: 7, asOf: AS_OF, templatesPerModel: 4, batchVessels: 25, samplePairs: 20 } as const;

async function seedInto(url: string, seed: number): Promise<{ client: Client; result: SeedResult }> {
  const result = await seedRegistry(url, { ...OPTIONS, seed });
  const client = new Client({ connectionString: url });
  await client.connect();
  return { client, result };
}

async function count(db: Client, sql: string, params: unknown[] = []): Promise<number> {
  const { rows } = await db.query<{ n: string }>(sql, params);
  return Number(rows[0]?.n);
}

/** A digest of the rows the seed decides (not audit times and hashes, secrets or password hashes). */
async function fingerprint(db: Client): Promise<Record<string, string>> {
  const tables: Record<string, string> = {
    vessels: `SELECT md5(string_agg(v::text, '|' ORDER BY v.id)) AS n FROM vessels v`,
    calibrations: `SELECT md5(string_agg(c::text, '|' ORDER BY c.id)) AS n FROM calibrations c`,
    factors: `SELECT md5(string_agg(f::text, '|' ORDER BY f.id)) AS n FROM factors f`,
    balance_checks: `SELECT md5(string_agg(b::text, '|' ORDER BY b.id)) AS n FROM balance_checks b`,
    // The seed's own entries (the running service may add its own); the credential's names its key id, drawn at random like the key.
    audit: `SELECT md5(string_agg(concat_ws(',', actor_id, action, entity_type, entity_id, new_values::text), '|' ORDER BY seq)) AS n
              FROM audit_entries WHERE request_id = 'bench-seed' AND entity_type <> 'service-credential'`,
  };
  const out: Record<string, string> = {};
  for (const [name, sql] of Object.entries(tables)) out[name] = (await db.query<{ n: string }>(sql)).rows[0]?.n ?? '';
  return out;
}

describe('bench:seed data generator (size XS)', () => {
  let t: TestApp;
  let db: Client;
  let seeded: SeedResult;

  beforeAll(async () => {
    t = await startTestApp({}, { clock: new ManualClock(AS_OF) });
    ({ client: db, result: seeded } = await seedInto(t.testDatabase.url, OPTIONS.seed));
  }, 180_000);
  afterAll(async () => {
    await db?.end();
    await t?.close();
  });

  it('writes the counts of the size', async () => {
    const size = OPTIONS.size;
    expect(await count(db, 'SELECT count(*) AS n FROM labs')).toBe(size.labs);
    expect(await count(db, 'SELECT count(*) AS n FROM vessels')).toBe(size.vessels);
    expect(await count(db, 'SELECT count(*) AS n FROM calibrations')).toBe(size.calibrations);
    expect(await count(db, 'SELECT count(*) AS n FROM balance_checks')).toBe(size.balanceChecks);
    // The administrator and the auditor besides the lab people.
    expect(await count(db, 'SELECT count(*) AS n FROM people')).toBe(size.people + 2);
    expect(await count(db, 'SELECT count(*) AS n FROM balances')).toBe(size.labs * size.balancesPerLab);
    // Every workflow state occurs, and failed runs as well as passing ones.
    const states = (await db.query<{ state: string }>('SELECT DISTINCT state FROM calibrations ORDER BY 1')).rows.map((r) => r.state);
    expect(states).toEqual(['approved', 'draft', 'returned', 'submitted', 'voided']);
    expect(await count(db, `SELECT count(*) AS n FROM calibrations WHERE verdict = 'fail'`)).toBeGreaterThan(0);
    expect(await count(db, `SELECT count(*) AS n FROM factors WHERE state = 'superseded'`)).toBeGreaterThan(0);
  });

  it('keeps one current factor per person and vessel: the one of their newest approved, passing calibration', async () => {
    expect(
      await count(
        db,
        `SELECT count(*) AS n FROM (SELECT 1 FROM factors WHERE state = 'current' GROUP BY person_id, vessel_id HAVING count(*) > 1) x`,
      ),
    ).toBe(0);
    const missing = await count(
      db,
      `WITH issued AS (
         SELECT DISTINCT ON (performer_id, vessel_id) id, state FROM calibrations
          WHERE verdict <> 'fail' AND reviewer_id IS NOT NULL AND submitted_at IS NOT NULL AND state IN ('approved', 'voided')
          ORDER BY performer_id, vessel_id, performed_at DESC)
       SELECT count(*) AS n FROM issued i
        WHERE NOT EXISTS (SELECT 1 FROM factors f WHERE f.calibration_id = i.id AND f.state = (CASE WHEN i.state = 'approved' THEN 'current' ELSE 'withdrawn' END))`,
    );
    expect(missing).toBe(0);
    expect(await count(db, `SELECT count(*) AS n FROM factors WHERE state = 'current'`)).toBeGreaterThan(OPTIONS.size.vessels);
  });

  it('gives each factor the performer and vessel of its calibration, from an approved, passing run, older ones superseded by newer', async () => {
    expect(
      await count(
        db,
        `SELECT count(*) AS n FROM factors f JOIN calibrations c ON c.id = f.calibration_id
          WHERE f.person_id <> c.performer_id OR f.vessel_id <> c.vessel_id OR c.verdict = 'fail' OR c.reviewed_at IS NULL
             OR f.valid_from <> c.performed_at OR f.lab_id <> c.lab_id`,
      ),
    ).toBe(0);
    expect(
      await count(
        db,
        `SELECT count(*) AS n FROM factors f LEFT JOIN factors n ON n.id = f.superseded_by_id
          WHERE f.state = 'superseded' AND (n.id IS NULL OR n.person_id <> f.person_id OR n.vessel_id <> f.vessel_id OR n.valid_from < f.valid_from)`,
      ),
    ).toBe(0);
  });

  it('uses a balance only after its passing routine check of the same morning', async () => {
    expect(
      await count(
        db,
        `SELECT count(*) AS n FROM calibrations c
          WHERE NOT EXISTS (SELECT 1 FROM balance_checks b WHERE b.balance_id = c.balance_id AND b.passed
                              AND b.performed_at <= c.performed_at AND b.performed_at > c.performed_at - interval '1 day')`,
      ),
    ).toBe(0);
    // Each balance that failed its last check is quarantined, and no calibration followed its last passing check.
    const quarantined = await db.query<{ id: string; status: string; last_passed: boolean }>(
      `SELECT b.id, b.status, (SELECT passed FROM balance_checks k WHERE k.balance_id = b.id ORDER BY performed_at DESC LIMIT 1) AS last_passed
         FROM balances b`,
    );
    for (const b of quarantined.rows) expect(b.status === 'quarantined').toBe(!b.last_passed);
  });

  it('stores inputs and results in the service’s shapes, and the results are what the library computes from the inputs', async () => {
    const { rows } = await db.query<{
      inputs: unknown;
      results: Record<string, unknown>;
      delivery_mode: 'contain' | 'deliver';
      kind: never;
      accuracy_class: never;
      class_standard: string | null;
      nominal_volume_ml: string;
      expansion_coefficient_per_k: string;
      limit_ml: string | null;
      limit_source: never;
      limit_reason: string | null;
    }>(
      `SELECT c.inputs, c.results, c.delivery_mode, v.kind, v.accuracy_class, v.class_standard, v.nominal_volume_ml::text AS nominal_volume_ml,
              v.expansion_coefficient_per_k::text AS expansion_coefficient_per_k, v.limit_ml::text AS limit_ml, v.limit_source, v.limit_reason
         FROM calibrations c JOIN vessels v ON v.id = c.vessel_id
        WHERE c.results IS NOT NULL ORDER BY c.id LIMIT 40`,
    );
    expect(rows).toHaveLength(40);
    for (const row of rows) {
      const inputs = CalibrationInputsSchema.parse(row.inputs);
      CalibrationResultsSchema.parse(row.results);
      const recomputed = computeCalibration(
        inputs,
        {
          vessel: {
            kind: row.kind,
            accuracyClass: row.accuracy_class,
            classStandard: row.class_standard,
            // As the repository reads them (Prisma's Decimal prints like decimal.js).
            nominalVolumeMl: new Decimal(row.nominal_volume_ml).toString(),
            expansionCoefficientPerK: new Decimal(row.expansion_coefficient_per_k).toString(),
            limitMl: row.limit_ml === null ? null : new Decimal(row.limit_ml).toString(),
            limitSource: row.limit_source,
            limitReason: row.limit_reason,
          },
          deliveryMode: row.delivery_mode,
          balanceWeightDensityKgPerM3: '8000',
        },
        new Date(row.results.computedAt as string),
      );
      const { traceability, ...stored } = row.results;
      expect(JSON.parse(JSON.stringify(recomputed))).toEqual(stored);
      expect(traceability).toEqual({ checkedAt: row.results.computedAt, violations: [], exceptionReason: null });
    }
  });

  it('leaves an audit chain that verifies', async () => {
    const pool = new Pool({ connectionString: t.testDatabase.url, max: 1 });
    const report = await verifyChain(pool).finally(() => pool.end());
    expect(report.intact).toBe(true);
    expect(report.entriesChecked).toBe(await count(db, 'SELECT count(*) AS n FROM audit_entries'));
    // Every vessel, calibration and factor has its entry.
    for (const [entity, table] of [
      ['vessel', 'vessels'],
      ['calibration', 'calibrations'],
      ['factor', 'factors'],
    ] as const) {
      expect(
        await count(
          db,
          `SELECT count(*) AS n FROM ${table} x WHERE NOT EXISTS (SELECT 1 FROM audit_entries a WHERE a.entity_type = $1 AND a.entity_id = x.id::text)`,
          [entity],
        ),
      ).toBe(0);
    }
  });

  it('hands benchmarks a credential and pairs the factor service answers', async () => {
    expect(seeded.pairs.length).toBeGreaterThan(0);
    for (const pair of seeded.pairs.slice(0, 5)) {
      const res = await t.http
        .get('/v1/factors/current')
        .query({ assetTag: pair.assetTag, email: pair.email })
        .set('authorization', `Bearer ${seeded.credentialKey}`);
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ source: 'factor', state: 'current', personId: pair.personId, vesselId: pair.vesselId });
    }
    const admin = seeded.signIn.find((s) => s.role === 'administrator');
    const signIn = await t.http.post('/v1/sessions').send({ email: admin?.email, password: seeded.password });
    expect(signIn.status).toBe(201);
  });

  it('gives the same rows for the same seed, and other rows for another', async () => {
    const again: TestDatabase = await createTestDatabase();
    const other: TestDatabase = await createTestDatabase();
    try {
      const first = await fingerprint(db);
      const same = await seedInto(again.url, OPTIONS.seed);
      const different = await seedInto(other.url, OPTIONS.seed + 1);
      const [a, b] = [await fingerprint(same.client), await fingerprint(different.client)];
      await same.client.end();
      await different.client.end();
      expect(a).toEqual(first);
      for (const key of Object.keys(first)) expect(b[key]).not.toEqual(first[key]);
    } finally {
      await again.drop();
      await other.drop();
    }
  }, 240_000);
});
