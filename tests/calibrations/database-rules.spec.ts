import { Client } from 'pg';

import { seedBalance, seedCast, seedInstrument, seedPerson, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

// The rules of the trade that no application bug may break, enforced by the database itself.
describe('calibration and factor rules in the database', () => {
  let t: TestApp;
  let sql: Client;
  let ids: { lab: string; vessel: string; otherVessel: string; analyst: string; other: string; balance: string; thermometer: string };

  const insertCalibration = async (performer: string, vessel: string, state = 'draft') => {
    const submitted = state === 'draft' ? [null, null, null, null] : ['{"points": []}', 'pass', '1.0.0', new Date()];
    const { rows } = await sql.query(
      `INSERT INTO calibrations (lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                 delivery_mode, inputs, results, verdict, library_version, submitted_at)
       VALUES ($1, $2, $3, $3, $4, $5, $6, now(), 'deliver', '{"points": []}', $7, $8, $9, $10) RETURNING id`,
      [ids.lab, vessel, performer, ids.balance, ids.thermometer, state, ...submitted],
    );
    return rows[0].id as string;
  };
  const insertFactor = (calibration: string, person: string, vessel: string) =>
    sql.query(
      `INSERT INTO factors (lab_id, person_id, vessel_id, calibration_id, kind, factor, correction_ml, expanded_uncertainty_ml,
                            coverage_factor, valid_from, valid_until)
       VALUES ($1, $2, $3, $4, 'single', 0.9992, -0.02, 0.006, 2, now(), now() + interval '1 year')`,
      [ids.lab, person, vessel, calibration],
    );

  beforeAll(async () => {
    t = await startTestApp();
    const cast = await seedCast(t.database.prisma);
    const prisma = t.database.prisma;
    const vessel = await seedVessel(prisma, cast.lab.id);
    const otherVessel = await seedVessel(prisma, cast.lab.id);
    const other = await seedPerson(prisma, { labs: [{ labId: cast.lab.id, role: 'analyst' }] });
    const balance = await seedBalance(prisma, cast.lab.id);
    const thermometer = await seedInstrument(prisma, cast.lab.id);
    ids = {
      lab: cast.lab.id,
      vessel: vessel.id,
      otherVessel: otherVessel.id,
      analyst: cast.people.analyst.id,
      other: other.id,
      balance: balance.id,
      thermometer: thermometer.id,
    };
    sql = new Client({ connectionString: t.testDatabase.appUrl });
    await sql.connect();
  });
  afterAll(async () => {
    await sql.end();
    await t.close();
  });

  it('lets a draft be edited, and freezes inputs and results once submitted', async () => {
    const id = await insertCalibration(ids.analyst, ids.vessel);
    await sql.query(`UPDATE calibrations SET inputs = '{"points": [1]}' WHERE id = $1`, [id]);
    await sql.query(
      `UPDATE calibrations SET state = 'submitted', results = '{}', verdict = 'pass', library_version = '1', submitted_at = now() WHERE id = $1`,
      [id],
    );
    await expect(sql.query(`UPDATE calibrations SET inputs = '{"points": [2]}' WHERE id = $1`, [id])).rejects.toThrow(/frozen/);
    await expect(sql.query(`UPDATE calibrations SET verdict = 'fail' WHERE id = $1`, [id])).rejects.toThrow(/frozen/);
    await expect(sql.query(`UPDATE calibrations SET state = 'draft' WHERE id = $1`, [id])).rejects.toThrow(
      /cannot go from submitted to draft/,
    );
    await sql.query(`UPDATE calibrations SET state = 'approved', reviewer_id = $2, reviewed_at = now() WHERE id = $1`, [id, ids.other]);
    await expect(sql.query(`UPDATE calibrations SET state = 'returned' WHERE id = $1`, [id])).rejects.toThrow(/cannot go from approved/);
  });

  it('never deletes a calibration', async () => {
    const id = await insertCalibration(ids.analyst, ids.vessel);
    await expect(sql.query('DELETE FROM calibrations WHERE id = $1', [id])).rejects.toThrow(/never deleted/);
  });

  it('refuses a factor for a person or vessel other than its calibration’s', async () => {
    const id = await insertCalibration(ids.analyst, ids.vessel, 'submitted');
    await expect(insertFactor(id, ids.other, ids.vessel)).rejects.toThrow(/factors_calibration_fk/);
    await expect(insertFactor(id, ids.analyst, ids.otherVessel)).rejects.toThrow(/factors_calibration_fk/);
    await insertFactor(id, ids.analyst, ids.vessel);
  });

  it('keeps at most one current factor per person and vessel, and factor values immutable', async () => {
    const first = await insertCalibration(ids.other, ids.otherVessel, 'submitted');
    const second = await insertCalibration(ids.other, ids.otherVessel, 'submitted');
    await insertFactor(first, ids.other, ids.otherVessel);
    await expect(insertFactor(second, ids.other, ids.otherVessel)).rejects.toThrow(/factors_one_current_key/);
    await expect(sql.query(`UPDATE factors SET factor = 1.1 WHERE calibration_id = $1`, [first])).rejects.toThrow(/immutable/);
    await sql.query(`UPDATE factors SET state = 'superseded', ended_at = now() WHERE calibration_id = $1`, [first]);
    await insertFactor(second, ids.other, ids.otherVessel);
    await expect(sql.query(`UPDATE factors SET state = 'current', ended_at = NULL WHERE calibration_id = $1`, [first])).rejects.toThrow(
      /stays so/,
    );
    await expect(sql.query(`DELETE FROM factors WHERE calibration_id = $1`, [first])).rejects.toThrow(/never deleted/);
  });
});
