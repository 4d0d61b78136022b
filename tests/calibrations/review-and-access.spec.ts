import { bearer, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import {
  type CalibrationWorld,
  calibrationsAs,
  calibrationWorld,
  createAndSubmit,
  expectStatus,
  freshPipetteRun,
  pipetteRun,
} from './helpers';

const NETS = ['24.9400', '24.9450', '24.9500'];

describe('who may record, review and read calibrations', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let as: Record<'admin' | 'auditor' | 'manager' | 'analyst' | 'otherManager', ReturnType<typeof calibrationsAs>>;

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    const tokens = w.cast.tokens;
    as = {
      admin: calibrationsAs(t, tokens.admin),
      auditor: calibrationsAs(t, tokens.auditor),
      manager: calibrationsAs(t, tokens.manager),
      analyst: calibrationsAs(t, tokens.analyst),
      otherManager: calibrationsAs(t, tokens.otherManager),
    };
  });
  afterAll(() => t.close());

  it('refuses the performer’s own approval under the four-eyes rule, and lets another manager approve', async () => {
    const own = await createAndSubmit(as.manager, await freshPipetteRun(w, NETS));
    const refused = expectStatus(await as.manager.act(own.id, 'approve', own.etag), 403);
    expect(refused.body).toMatchObject({ code: 'four-eyes', type: '/problems/four-eyes' });
    expectStatus(await as.manager.act(own.id, 'return', own.etag, { note: 'my own' }), 403);
    const approved = expectStatus(await as.admin.act(own.id, 'approve', own.etag), 200);
    expect(approved.body).toMatchObject({ state: 'approved', reviewerId: w.cast.people.admin.id });
  });

  it('lets a manager approve their own calibration where the lab has turned four-eyes off', async () => {
    await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { fourEyesRequired: false } });
    try {
      const own = await createAndSubmit(as.manager, await freshPipetteRun(w, NETS));
      expectStatus(await as.manager.act(own.id, 'approve', own.etag), 200);
    } finally {
      await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { fourEyesRequired: true } });
    }
  });

  it('lets a manager enter a calibration for an analyst, records both, and keeps that manager from reviewing it', async () => {
    const entered = expectStatus(await as.manager.create(await freshPipetteRun(w, NETS, { performerId: w.cast.people.analyst.id })), 201);
    expect(entered.body).toMatchObject({ performerId: w.cast.people.analyst.id, enteredById: w.cast.people.manager.id });
    // The analyst may edit and submit the record entered for them.
    const submitted = expectStatus(await as.analyst.act(entered.body.id, 'submit', entered.headers.etag as string), 200);
    expectStatus(await as.manager.act(entered.body.id, 'approve', submitted.headers.etag as string), 403);
    const other = await seedPerson(w.prisma, { displayName: 'Second Manager', labs: [{ labId: w.cast.lab.id, role: 'manager' }] });
    const second = calibrationsAs(t, await sessionFor(w.prisma, other.id));
    const approved = expectStatus(await second.act(entered.body.id, 'approve', submitted.headers.etag as string), 200);
    const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id } });
    expect(factor.personId).toBe(w.cast.people.analyst.id);
  });

  it('refuses analysts entering for someone else, and people who are not active members as performers', async () => {
    const forManager = expectStatus(await as.analyst.create(pipetteRun(w, NETS, { performerId: w.cast.people.manager.id })), 403);
    expect(forManager.body.code).toBe('forbidden');
    const outsider = expectStatus(await as.manager.create(pipetteRun(w, NETS, { performerId: w.cast.people.otherManager.id })), 400);
    expect(outsider.body.errors).toEqual([{ field: 'performerId', reason: expect.stringMatching(/not an active analyst or manager/) }]);
  });

  it('refuses approval and return by analysts, and return without a note', async () => {
    const cal = await createAndSubmit(as.analyst, pipetteRun(w, NETS));
    expect(expectStatus(await as.analyst.act(cal.id, 'approve', cal.etag), 403).body.code).toBe('forbidden');
    expectStatus(await as.analyst.act(cal.id, 'return', cal.etag, { note: 'please' }), 403);
    expectStatus(await as.manager.act(cal.id, 'return', cal.etag, {}), 400);
  });

  it('returns a calibration for correction: editable again, resubmitted with new results, then approved', async () => {
    const cal = await createAndSubmit(as.analyst, await freshPipetteRun(w, NETS));
    const returned = expectStatus(await as.manager.act(cal.id, 'return', cal.etag, { note: 'Replicate 3 looks mistyped' }), 200);
    expect(returned.body).toMatchObject({ state: 'returned', reviewNote: 'Replicate 3 looks mistyped' });
    const edited = expectStatus(
      await as.analyst.patch(cal.id, returned.headers.etag as string, {
        points: [{ replicates: pipetteRun(w, ['24.9400', '24.9450', '24.9460']).points[0]!.replicates }],
      }),
      200,
    );
    expect(edited.body).toMatchObject({ state: 'returned', results: null, verdict: null });
    const resubmitted = expectStatus(await as.analyst.act(cal.id, 'submit', edited.headers.etag as string), 200);
    expect(resubmitted.body.results.points[0].replicates[2].netMassG).toBe('24.946');
    expectStatus(await as.manager.act(cal.id, 'approve', resubmitted.headers.etag as string), 200);
    const trail = await w.prisma.auditEntry.findMany({ where: { entityId: cal.id }, orderBy: { seq: 'asc' } });
    expect(trail.map((e) => e.action)).toEqual(['create', 'submit', 'return', 'update', 'submit', 'approve']);
    expect(trail[2]).toMatchObject({ reason: 'Replicate 3 looks mistyped' });
  });

  it('lets auditors read everything and change nothing', async () => {
    const cal = await createAndSubmit(as.analyst, pipetteRun(w, NETS));
    expectStatus(await as.auditor.get(cal.id), 200);
    expect(expectStatus(await as.auditor.list(), 200).body.items.length).toBeGreaterThan(0);
    expectStatus(await as.auditor.create(pipetteRun(w, NETS)), 403);
    expectStatus(await as.auditor.act(cal.id, 'approve', cal.etag), 403);
    expectStatus(await as.auditor.act(cal.id, 'void', cal.etag, { reason: 'audit finding' }), 403);
  });

  it('answers 404 to people of another lab, for reads and writes alike, and lists nothing of that lab', async () => {
    const cal = await createAndSubmit(as.analyst, pipetteRun(w, NETS));
    expect(expectStatus(await as.otherManager.get(cal.id), 404).body.code).toBe('not-found');
    expectStatus(await as.otherManager.act(cal.id, 'approve', cal.etag), 404);
    expectStatus(await as.otherManager.act(cal.id, 'void', cal.etag, { reason: 'not ours' }), 404);
    expectStatus(await as.otherManager.patch(cal.id, cal.etag, { notes: 'x' }), 404);
    expectStatus(await as.otherManager.create(pipetteRun(w, NETS)), 404);
    const listed = expectStatus(await as.otherManager.list({ labId: w.cast.lab.id }), 200);
    expect(listed.body).toEqual({ items: [], nextCursor: null });
    expect(expectStatus(await as.otherManager.list(), 200).body.items).toEqual([]);
  });

  it('refuses service credentials on calibration routes', async () => {
    const { seedCredential } = await import('../support/factories');
    const { key } = await seedCredential(w.prisma, w.cast.people.admin.id, ['factors:read', 'inventory:read']);
    expectStatus(await t.http.get('/v1/calibrations').set(bearer(key)), 403);
  });
});
