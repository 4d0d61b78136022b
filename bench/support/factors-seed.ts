import { randomUUID } from 'node:crypto';

import { Client } from 'pg';

import { newCredentialKey } from '../../apps/api/src/auth/tokens';

/*
 * Data for the factor benchmark, straight into the database as the owner (a few
 * multi-row INSERTs over arrays: seconds, not minutes). One lab, its analysts,
 * its pipettes and burettes, for each vessel the approved calibrations and the
 * factors of several analysts (with an older, superseded factor for some), and a
 * service credential with both factor scopes.
 */

export interface SeedSize {
  readonly people: number;
  readonly vessels: number;
  /** Analysts with a current factor on each vessel. */
  readonly factorsPerVessel: number;
}

export interface Pair {
  readonly personId: string;
  readonly email: string;
  readonly externalRef: string;
  readonly vesselId: string;
  readonly assetTag: string;
  /** A volume the correction endpoint accepts for this vessel (the nominal, or a point on the curve). */
  readonly indicatedVolumeMl: string;
}

export interface Seeded {
  readonly labId: string;
  readonly credentialKey: string;
  readonly pairs: readonly Pair[];
  readonly counts: { people: number; vessels: number; calibrations: number; factors: number };
}

const DAY_MS = 86_400_000;
const pad = (n: number, width: number) => String(n).padStart(width, '0');

/** Burettes every fifth vessel (a curve through 5, 25 and 50 mL); 25 mL one-mark pipettes otherwise. */
const isBurette = (i: number) => i % 5 === 4;

export async function seedFactorBench(ownerUrl: string, size: SeedSize): Promise<Seeded> {
  const db = new Client({ connectionString: ownerUrl });
  await db.connect();
  try {
    await db.query('BEGIN');
    const labId = randomUUID();
    await db.query(`INSERT INTO labs (id, code, name, time_zone) VALUES ($1, 'BENCH-DW', 'Drinking-water chemistry (benchmark)', 'UTC')`, [
      labId,
    ]);
    const adminId = randomUUID();
    await db.query(
      `INSERT INTO people (id, email, display_name, registry_role) VALUES ($1, 'bench.admin@waterworks.example', 'Bench Admin', 'administrator')`,
      [adminId],
    );

    const people = Array.from({ length: size.people }, (_, i) => ({
      id: randomUUID(),
      email: `analyst-${pad(i + 1, 4)}@waterworks.example`,
      externalRef: `DW-ANA-${pad(i + 1, 4)}`,
    }));
    await db.query(
      `INSERT INTO people (id, email, display_name) SELECT id, email, 'Analyst ' || email FROM unnest($1::uuid[], $2::text[]) AS p(id, email)`,
      [people.map((p) => p.id), people.map((p) => p.email)],
    );
    await db.query(
      `INSERT INTO lab_memberships (lab_id, person_id, lab_role, external_ref)
       SELECT $1, id, 'analyst', ref FROM unnest($2::uuid[], $3::text[]) AS m(id, ref)`,
      [labId, people.map((p) => p.id), people.map((p) => p.externalRef)],
    );

    const vessels = Array.from({ length: size.vessels }, (_, i) => ({
      id: randomUUID(),
      burette: isBurette(i),
      assetTag: isBurette(i) ? `BUR-50-B${pad(i + 1, 5)}` : `PIP-25-B${pad(i + 1, 5)}`,
    }));
    await db.query(
      `INSERT INTO vessels (id, lab_id, asset_tag, kind, delivery_mode, nominal_volume_ml, graduation_interval_ml, accuracy_class,
                            class_standard, material, expansion_coefficient_per_k, limit_ml, limit_source)
       SELECT id, $1, tag,
              CASE WHEN burette THEN 'burette' ELSE 'one-mark-pipette' END, 'deliver',
              CASE WHEN burette THEN 50 ELSE 25 END, CASE WHEN burette THEN 0.1 END, 'A',
              CASE WHEN burette THEN 'ISO 385:2005' ELSE 'ISO 648:2008' END, 'borosilicate-3-3', 0.0000099,
              CASE WHEN burette THEN 0.05 ELSE 0.03 END, 'class-table'
         FROM unnest($2::uuid[], $3::text[], $4::boolean[]) AS v(id, tag, burette)`,
      [labId, vessels.map((v) => v.id), vessels.map((v) => v.assetTag), vessels.map((v) => v.burette)],
    );

    const balanceId = randomUUID();
    const thermometerId = randomUUID();
    await db.query(`INSERT INTO balances (id, lab_id, asset_tag, capacity_g, readability_g) VALUES ($1, $2, 'BAL-BENCH', 220, 0.0001)`, [
      balanceId,
      labId,
    ]);
    await db.query(`INSERT INTO instruments (id, lab_id, asset_tag, kind) VALUES ($1, $2, 'TH-BENCH', 'thermometer')`, [
      thermometerId,
      labId,
    ]);

    // Factors: for vessel i, analysts (7i + k) mod P, k < factorsPerVessel, each current; the first also has a superseded one.
    const now = Date.now();
    const rows: {
      person: number;
      vessel: number;
      calibrationId: string;
      factorId: string;
      performedAt: Date;
      createdAt: Date;
      validUntil: Date;
      current: boolean;
      endedAt: Date | null;
    }[] = [];
    vessels.forEach((_, v) => {
      for (let k = 0; k < size.factorsPerVessel; k++) {
        const person = (7 * v + k) % size.people;
        const performedAt = new Date(now - (1 + ((v * 13 + k * 29) % 300)) * DAY_MS);
        const createdAt = new Date(performedAt.getTime() + DAY_MS);
        if (k === 0) {
          const oldPerformed = new Date(performedAt.getTime() - 330 * DAY_MS);
          rows.push({
            person,
            vessel: v,
            calibrationId: randomUUID(),
            factorId: randomUUID(),
            performedAt: oldPerformed,
            createdAt: new Date(oldPerformed.getTime() + DAY_MS),
            validUntil: new Date(oldPerformed.getTime() + 365 * DAY_MS),
            current: false,
            endedAt: createdAt,
          });
        }
        rows.push({
          person,
          vessel: v,
          calibrationId: randomUUID(),
          factorId: randomUUID(),
          performedAt,
          createdAt,
          validUntil: new Date(performedAt.getTime() + 365 * DAY_MS),
          current: true,
          endedAt: null,
        });
      }
    });
    await db.query(
      `INSERT INTO calibrations (id, lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                 delivery_mode, inputs, results, verdict, library_version, submitted_at, reviewer_id, reviewed_at)
       SELECT id, $1, vessel, person, person, $2, $3, 'approved', performed, 'deliver', '{"points": []}', '{"points": []}', 'pass',
              'bench', performed, $4, created
         FROM unnest($5::uuid[], $6::uuid[], $7::uuid[], $8::timestamptz[], $9::timestamptz[]) AS c(id, vessel, person, performed, created)`,
      [
        labId,
        balanceId,
        thermometerId,
        adminId,
        rows.map((r) => r.calibrationId),
        rows.map((r) => vessels[r.vessel]?.id),
        rows.map((r) => people[r.person]?.id),
        rows.map((r) => r.performedAt),
        rows.map((r) => r.createdAt),
      ],
    );
    const factor = (r: (typeof rows)[number]) => (0.999 + ((r.vessel * 7 + r.person) % 9) * 0.0001).toFixed(4);
    const curve = (r: (typeof rows)[number]) =>
      JSON.stringify([
        { nominalVolumeMl: '5', meanVolumeMl: '4.996', correctionMl: '-0.004', expandedUncertaintyMl: '0.008' },
        { nominalVolumeMl: '25', meanVolumeMl: '24.985', correctionMl: '-0.015', expandedUncertaintyMl: '0.014' },
        { nominalVolumeMl: '50', meanVolumeMl: (50 * Number(factor(r))).toFixed(4), correctionMl: '-0.02', expandedUncertaintyMl: '0.02' },
      ]);
    await db.query(
      `INSERT INTO factors (id, lab_id, person_id, vessel_id, calibration_id, kind, factor, correction_ml, curve, expanded_uncertainty_ml,
                            coverage_factor, valid_from, valid_until, state, ended_at, superseded_by_id, created_at)
       SELECT id, $1, person, vessel, calibration,
              CASE WHEN burette THEN 'curve' ELSE 'single' END, factor,
              CASE WHEN burette THEN NULL ELSE 25 * factor - 25 END,
              CASE WHEN burette THEN curve::jsonb END,
              CASE WHEN burette THEN 0.02 ELSE 0.012 END, 2, valid_from, valid_until,
              CASE WHEN current THEN 'current' ELSE 'superseded' END, ended_at, NULL, created
         FROM unnest($2::uuid[], $3::uuid[], $4::uuid[], $5::uuid[], $6::boolean[], $7::numeric[], $8::text[], $9::timestamptz[],
                     $10::timestamptz[], $11::boolean[], $12::timestamptz[], $13::timestamptz[])
           AS f(id, person, vessel, calibration, burette, factor, curve, valid_from, valid_until, current, ended_at, created)`,
      [
        labId,
        rows.map((r) => r.factorId),
        rows.map((r) => people[r.person]?.id),
        rows.map((r) => vessels[r.vessel]?.id),
        rows.map((r) => r.calibrationId),
        rows.map((r) => isBurette(r.vessel)),
        rows.map(factor),
        rows.map(curve),
        rows.map((r) => r.performedAt),
        rows.map((r) => r.validUntil),
        rows.map((r) => r.current),
        rows.map((r) => r.endedAt),
        rows.map((r) => r.createdAt),
      ],
    );

    const { key, keyId, secretHash } = newCredentialKey();
    await db.query(
      `INSERT INTO service_credentials (name, key_id, secret_hash, scopes, all_labs, lab_ids, created_by)
       VALUES ('titration-benchmark', $1, $2, ARRAY['factors:read', 'corrections:write'], false, ARRAY[$3::uuid], $4)`,
      [keyId, Buffer.from(secretHash), labId, adminId],
    );
    await db.query('COMMIT');
    await db.query('ANALYZE');

    const pairs: Pair[] = rows
      .filter((r) => r.current)
      .map((r) => {
        const p = people[r.person] as (typeof people)[number];
        const v = vessels[r.vessel] as (typeof vessels)[number];
        return {
          personId: p.id,
          email: p.email,
          externalRef: p.externalRef,
          vesselId: v.id,
          assetTag: v.assetTag,
          indicatedVolumeMl: v.burette ? (5 + ((r.vessel * 31 + r.person) % 4500) / 100).toFixed(2) : '25',
        };
      });
    return {
      labId,
      credentialKey: key,
      pairs,
      counts: { people: people.length + 1, vessels: vessels.length, calibrations: rows.length, factors: rows.length },
    };
  } catch (err) {
    await db.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    await db.end();
  }
}

/** The plan PostgreSQL chooses for the lookup by ids on the seeded data, for the report. */
export async function lookupPlan(ownerUrl: string, text: string, pair: Pick<Pair, 'personId' | 'vesselId'>): Promise<string[]> {
  const db = new Client({ connectionString: ownerUrl });
  await db.connect();
  try {
    await db.query(`PREPARE bench_lookup AS ${text}`);
    const { rows } = await db.query<{ 'QUERY PLAN': string }>(
      `EXPLAIN (ANALYZE, COSTS OFF, TIMING OFF, SUMMARY OFF) EXECUTE bench_lookup(${db.escapeLiteral(pair.personId)}, ${db.escapeLiteral(pair.vesselId)})`,
    );
    return rows.map((r) => r['QUERY PLAN']);
  } finally {
    await db.end();
  }
}
