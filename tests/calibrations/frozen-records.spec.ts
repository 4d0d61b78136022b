import { Client } from 'pg';

import { startTestApp, type TestApp } from '../support/test-app';
import { type CalibrationWorld, calibrationsAs, calibrationWorld, createAndSubmit, expectStatus, pipetteRun } from './helpers';

const NETS = ['24.9400', '24.9450', '24.9500'];

describe('a calibration is frozen once submitted, and changes need the version read', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let analyst: ReturnType<typeof calibrationsAs>;
  let manager: ReturnType<typeof calibrationsAs>;
  let sql: Client;

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    analyst = calibrationsAs(t, w.cast.tokens.analyst);
    manager = calibrationsAs(t, w.cast.tokens.manager);
    // The role the service itself runs as.
    sql = new Client({ connectionString: t.testDatabase.appUrl });
    await sql.connect();
  });
  afterAll(async () => {
    await sql.end();
    await t.close();
  });

  it('edits a draft with If-Match (428 without, 412 when stale), audited with old and new values', async () => {
    const created = expectStatus(await analyst.create(pipetteRun(w, NETS)), 201);
    const id = created.body.id as string;
    expectStatus(
      await t.http
        .patch(`/v1/calibrations/${id}`)
        .set({ authorization: `Bearer ${w.cast.tokens.analyst}` })
        .send({ notes: 'x' }),
      428,
    );
    const edited = expectStatus(await analyst.patch(id, '"v1"', { notes: 'Tip re-greased', airDensityKgPerM3: '1.1990' }), 200);
    expect(edited.headers.etag).toBe('"v2"');
    expect(edited.body).toMatchObject({ notes: 'Tip re-greased', version: 2 });
    expect(edited.body.inputs).toMatchObject({ airDensityKgPerM3: '1.199' });
    expect(edited.body.inputs).not.toHaveProperty('airConditions');
    expect(expectStatus(await analyst.patch(id, '"v1"', { notes: 'late' }), 412).body.code).toBe('precondition-failed');
    const entry = await w.prisma.auditEntry.findFirst({ where: { entityId: id, action: 'update' } });
    expect(entry?.oldValues).toMatchObject({ notes: null, version: 1 });
    expect(entry?.newValues).toMatchObject({ notes: 'Tip re-greased', version: 2 });
    // Only the performer (or the manager who entered it) edits.
    expectStatus(await manager.patch(id, '"v2"', { notes: 'manager' }), 403);
  });

  it('refuses edits after submission in the API (409 invalid-state) and in the database (as the service’s own role)', async () => {
    const { id, etag } = await createAndSubmit(analyst, pipetteRun(w, NETS));
    const refused = expectStatus(await analyst.patch(id, etag, { notes: 'afterthought' }), 409);
    expect(refused.body).toMatchObject({ code: 'invalid-state', state: 'submitted' });
    expectStatus(await analyst.act(id, 'submit', etag), 409);

    await expect(sql.query(`UPDATE calibrations SET inputs = '{"points": []}' WHERE id = $1`, [id])).rejects.toThrow(/frozen/);
    await expect(sql.query(`UPDATE calibrations SET verdict = 'fail' WHERE id = $1`, [id])).rejects.toThrow(/frozen/);
    await expect(sql.query(`UPDATE calibrations SET state = 'draft' WHERE id = $1`, [id])).rejects.toThrow(/cannot go from submitted/);
    await expect(sql.query('DELETE FROM calibrations WHERE id = $1', [id])).rejects.toThrow(/never deleted/);
    const stored = expectStatus(await analyst.get(id), 200);
    expect(stored.body).toMatchObject({ state: 'submitted', verdict: 'pass', notes: null });
  });

  it('lets the performer void their own returned record but not a submitted one; a manager voids with a reason, once', async () => {
    const draft = expectStatus(await analyst.create(pipetteRun(w, NETS)), 201);
    expectStatus(await analyst.act(draft.body.id, 'void', '"v1"', { reason: 'no' }), 400);
    // A draft that was never submitted carries no results, and may be voided all the same.
    const neverSubmitted = expectStatus(await analyst.act(draft.body.id, 'void', '"v1"', { reason: 'Wrong vessel picked' }), 200);
    expect(neverSubmitted.body).toMatchObject({ state: 'voided', verdict: null, voidReason: 'Wrong vessel picked' });

    const sent = await createAndSubmit(analyst, pipetteRun(w, NETS));
    const returned = expectStatus(await manager.act(sent.id, 'return', sent.etag, { note: 'Wrong pipette?' }), 200);
    const voided = expectStatus(
      await analyst.act(sent.id, 'void', returned.headers.etag as string, { reason: 'Wrong vessel picked' }),
      200,
    );
    expect(voided.body).toMatchObject({ state: 'voided', voidReason: 'Wrong vessel picked', voidedById: w.cast.people.analyst.id });
    expect(voided.body.withdrawnFactorId).toBeNull();

    const { id, etag } = await createAndSubmit(analyst, pipetteRun(w, NETS));
    expectStatus(await analyst.act(id, 'void', etag, { reason: 'Changed my mind' }), 403);
    const byManager = expectStatus(await manager.act(id, 'void', etag, { reason: 'Duplicate entry' }), 200);
    const again = expectStatus(await manager.act(id, 'void', byManager.headers.etag as string, { reason: 'Duplicate entry' }), 409);
    expect(again.body).toMatchObject({ code: 'invalid-state', state: 'voided' });
    expectStatus(await manager.act(id, 'approve', byManager.headers.etag as string), 409);
    const entry = await w.prisma.auditEntry.findFirst({ where: { entityId: id, action: 'void' } });
    expect(entry).toMatchObject({ reason: 'Duplicate entry', actorId: w.cast.people.manager.id });
  });
});
