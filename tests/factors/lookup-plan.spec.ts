import { Client } from 'pg';

import { FactorLookupRepository } from '../../apps/api/src/factors/factor-lookup.repository';
import { startTestApp, type TestApp } from '../support/test-app';
import { factorScenario, type FactorScenario } from './scenario';

// The factor service's hot path is one SQL statement per variant. Each must be answered from indexes only,
// with the generic plan a prepared statement gets after a few executions.
describe('factor lookup query plans', () => {
  let t: TestApp;
  let s: FactorScenario;
  let sql: Client;

  beforeAll(async () => {
    t = await startTestApp();
    s = await factorScenario(t.database.prisma);
    sql = new Client({ connectionString: t.testDatabase.url });
    await sql.connect();
    // Three hundred analysts with a factor on the same pipette, and as many pipettes of Lena's: the
    // planner then sees the (person, vessel) selectivity that a real registry has.
    await sql.query(
      `INSERT INTO people (email, display_name) SELECT 'bulk-' || g || '@waterworks.example', 'Bulk ' || g FROM generate_series(1, 300) g`,
    );
    await sql.query(
      `INSERT INTO lab_memberships (lab_id, person_id, lab_role, external_ref)
       SELECT $1, id, 'analyst', 'BULK-' || id FROM people WHERE email LIKE 'bulk-%'`,
      [s.labId],
    );
    await sql.query(
      `INSERT INTO vessels (lab_id, asset_tag, kind, delivery_mode, nominal_volume_ml, accuracy_class, expansion_coefficient_per_k,
                            limit_ml, limit_source)
       SELECT $1, 'PIP-BULK-' || g, 'one-mark-pipette', 'deliver', 25, 'A', 0.0000099, 0.03, 'class-table' FROM generate_series(1, 300) g`,
      [s.labId],
    );
    const performerVessel = `SELECT p.id AS person_id, $2::uuid AS vessel_id FROM people p WHERE p.email LIKE 'bulk-%'
                             UNION ALL SELECT $3::uuid, v.id FROM vessels v WHERE v.asset_tag LIKE 'PIP-BULK-%'`;
    await sql.query(
      `INSERT INTO calibrations (lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                 delivery_mode, inputs, results, verdict, library_version, submitted_at, reviewer_id, reviewed_at)
       SELECT $1, pv.vessel_id, pv.person_id, pv.person_id, c.balance_id, c.thermometer_id, 'approved', now(), 'deliver',
              '{}', '{}', 'pass', 'test', now(), pv.person_id, now()
         FROM (${performerVessel}) pv, (SELECT balance_id, thermometer_id FROM calibrations LIMIT 1) c`,
      [s.labId, s.vessels.pipette.id, s.people.lena.id],
    );
    await sql.query(
      `INSERT INTO factors (lab_id, person_id, vessel_id, calibration_id, kind, factor, correction_ml, expanded_uncertainty_ml,
                            coverage_factor, valid_from, valid_until)
       SELECT c.lab_id, c.performer_id, c.vessel_id, c.id, 'single', 0.9996, -0.01, 0.012, 2, now(), now() + interval '1 year'
         FROM calibrations c WHERE NOT EXISTS (SELECT 1 FROM factors f WHERE f.calibration_id = c.id)
          AND NOT EXISTS (SELECT 1 FROM factors f WHERE f.person_id = c.performer_id AND f.vessel_id = c.vessel_id)`,
    );
    await sql.query('ANALYZE');
    // Tables of a few rows are cheaper to scan whole: forbid that, so a missing index shows as a Seq Scan.
    await sql.query('SET enable_seqscan = off');
    await sql.query('SET plan_cache_mode = force_generic_plan');
  });
  afterAll(async () => {
    await sql.end();
    await t.close();
  });

  // The person's membership of the vessel's lab: by (lab, person) or by person (a person has few memberships).
  const MEMBERSHIP = /lab_memberships_pkey|lab_memberships_person_idx/;
  const people = {
    id: { value: () => s.people.lena.id, indexes: [/people_pkey/, MEMBERSHIP] },
    email: { value: () => s.people.lena.email, indexes: [/people_email_key/, MEMBERSHIP] },
    externalRef: { value: () => 'DW-ANA-07', indexes: [/lab_memberships_external_ref_key/, /people_pkey/] },
  } as const;
  const vessels = {
    id: { value: () => s.vessels.pipette.id, index: /vessels_pkey/ },
    assetTag: { value: () => s.vessels.pipette.assetTag, index: /vessels_asset_tag_key/ },
  } as const;

  for (const person of ['id', 'email', 'externalRef'] as const) {
    for (const vessel of ['id', 'assetTag'] as const) {
      for (const at of [false, true]) {
        it(`by person ${person}, vessel ${vessel}, ${at ? 'at an instant' : 'current'}: indexes only`, async () => {
          const { name, text } = FactorLookupRepository.statementFor(person, vessel, at);
          const prepared = name.replace(/-/g, '_');
          await sql.query(`PREPARE ${prepared} AS ${text}`);
          const args = [people[person].value(), vessels[vessel].value(), ...(at ? [new Date().toISOString()] : [])];
          const { rows } = await sql.query(`EXPLAIN EXECUTE ${prepared}(${args.map((a) => sql.escapeLiteral(a)).join(', ')})`);
          await sql.query(`DEALLOCATE ${prepared}`);
          const plan = rows.map((r: { 'QUERY PLAN': string }) => r['QUERY PLAN']).join('\n');
          expect(plan).not.toMatch(/Seq Scan/);
          for (const index of [...people[person].indexes, vessels[vessel].index]) expect(plan).toMatch(index);
          expect(plan).toMatch(at ? /factors_person_vessel_validity_idx/ : /factors_one_current_key|factors_person_vessel_validity_idx/);
        });
      }
    }
  }
});
