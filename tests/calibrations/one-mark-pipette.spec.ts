import { METROLOGY_LIBRARY_VERSION } from '@registry/metrology';

import { startTestApp, type TestApp } from '../support/test-app';
import {
  type CalibrationWorld,
  calibrationsAs,
  calibrationWorld,
  createAndSubmit,
  expectNear,
  expectStatus,
  hoursAgo,
  pipetteRun,
  pointOf,
  resultsOf,
} from './helpers';

// ISO 8655-6 annex table of Z at 20 °C and 101.3 kPa, 8000 kg/m3 weights: 1.0029 mL/g (4 decimals, so the
// tolerance is 0.51e-4 mL/g), as reproduced in a piston-pipette user manual, appendix 2 (the source the
// library's own Z spec names). At 20 °C the expansion term vanishes, so each replicate is V = m·Z.
const Z20 = 1.0029;
const Z_TOL = 0.51e-4;
const NETS = ['24.9400', '24.9450', '24.9500'];

describe('a one-mark pipette: create, submit, approve, factor', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let analyst: ReturnType<typeof calibrationsAs>;
  let manager: ReturnType<typeof calibrationsAs>;

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    analyst = calibrationsAs(t, w.cast.tokens.analyst);
    manager = calibrationsAs(t, w.cast.tokens.manager);
  });
  afterAll(() => t.close());

  it('records a draft for the signed-in analyst, with the delivery mode of the vessel and the point at its nominal volume', async () => {
    const res = expectStatus(await analyst.create(pipetteRun(w, NETS, { notes: 'Morning run' })), 201);
    expect(res.headers.etag).toBe('"v1"');
    expect(res.headers.location).toBe(`/v1/calibrations/${res.body.id}`);
    expect(res.body).toMatchObject({
      state: 'draft',
      labId: w.cast.lab.id,
      vesselId: w.pipette.id,
      performerId: w.cast.people.analyst.id,
      enteredById: w.cast.people.analyst.id,
      deliveryMode: 'deliver',
      results: null,
      verdict: null,
      factor: null,
      notes: 'Morning run',
    });
    expect(res.body.inputs.points).toEqual([
      {
        nominalVolumeMl: '25',
        replicates: NETS.map((n) => ({ beforeG: '40', afterG: String(40 + Number(n)), waterTemperatureC: '20' })),
      },
    ]);
    const audit = await w.prisma.auditEntry.findFirst({ where: { entityId: res.body.id, action: 'create' } });
    expect(audit).toMatchObject({ entityType: 'calibration', actorId: w.cast.people.analyst.id });
  });

  it('computes each replicate with the tabulated Z at submission and freezes results with the library version', async () => {
    const { body } = await createAndSubmit(analyst, pipetteRun(w, NETS));
    expect(body).toMatchObject({ state: 'submitted', verdict: 'pass', libraryVersion: METROLOGY_LIBRARY_VERSION });
    const results = resultsOf(body);
    expect(results).toMatchObject({
      libraryVersion: METROLOGY_LIBRARY_VERSION,
      verdict: 'pass',
      weightDensityKgPerM3: '8000',
      weightDensitySource: 'balance',
      airDensitySource: 'cipm-2007',
      acceptance: { limitMl: '0.03', limitSource: 'class-table' },
      traceability: { violations: [], exceptionReason: null },
    });
    const point = pointOf(results, 0);
    NETS.forEach((net, i) => {
      expect(point.replicates[i]!).toMatchObject({ index: i, netMassG: String(Number(net)), waterTemperatureC: '20' });
      expectNear(point.replicates[i]!.zFactorMlPerG, Z20, Z_TOL);
      expectNear(point.replicates[i]!.volumeMl, Number(net) * Z20, Number(net) * Z_TOL);
    });
    // Hand computation: mean net mass 24.9450 g, so mean V = 24.9450 × 1.0029 = 25.01734 mL; s(m) = 0.0050 g, s(V) = Z·s(m).
    expectNear(point.meanVolumeMl, 24.945 * Z20, 24.945 * Z_TOL);
    expectNear(point.systematicErrorMl, 24.945 * Z20 - 25, 24.945 * Z_TOL);
    expectNear(point.standardDeviationMl, 0.005 * Z20, 0.005 * Z_TOL);
    expectNear(point.cvPercent, (100 * Number(point.standardDeviationMl)) / Number(point.meanVolumeMl), 1e-9);
    expect(point.verdict).toMatchObject({ verdict: 'pass', limitSource: 'table', limitMl: '0.03' });
    expect(point.verdict.publishedLimit).toMatchObject({ source: 'ISO 648:2008' });
    expect(Number(point.expandedUncertaintyMl)).toBeGreaterThan(0);
    expect(point.outliers).toMatchObject({ test: 'grubbs', applicable: true, outlier: false });
    expect(point.uncertaintyBudget.length).toBeGreaterThan(5);
  });

  it('approval makes the performer’s current factor in the same step; a later calibration supersedes it and both stay on record', async () => {
    const first = await createAndSubmit(analyst, pipetteRun(w, NETS, { performedAt: hoursAgo(1.5).toISOString() }));
    const approved = expectStatus(await manager.act(first.id, 'approve', first.etag, { note: 'Printout checked' }), 200);
    expect(approved.body).toMatchObject({ state: 'approved', reviewerId: w.cast.people.manager.id, reviewNote: 'Printout checked' });
    expect(approved.body.impact).toMatchObject({ vesselQuarantined: false, review: null });
    const firstFactor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id } });
    expect(firstFactor).toMatchObject({
      personId: w.cast.people.analyst.id,
      vesselId: w.pipette.id,
      calibrationId: first.id,
      kind: 'single',
      state: 'current',
    });
    // factor = mean / nominal = 25.01734 / 25.
    expectNear(firstFactor.factor!.toString(), (24.945 * Z20) / 25, (24.945 * Z_TOL) / 25);
    expect(approved.body.factor).toEqual({ id: firstFactor.id, state: 'current' });

    const second = await createAndSubmit(analyst, pipetteRun(w, ['24.9540', '24.9550', '24.9560']));
    const secondApproved = expectStatus(await manager.act(second.id, 'approve', second.etag), 200);
    expect(secondApproved.body.impact.factor).toMatchObject({ current: true, supersededFactorId: firstFactor.id });

    const factors = await w.prisma.factor.findMany({ where: { personId: w.cast.people.analyst.id, vesselId: w.pipette.id } });
    expect(factors.filter((f) => f.state === 'current').map((f) => f.calibrationId)).toEqual([second.id]);
    expect(factors.find((f) => f.id === firstFactor.id)).toMatchObject({
      state: 'superseded',
      supersededById: secondApproved.body.impact.factor.id,
    });
    // The first calibration is still there, approved, its factor now history.
    const history = expectStatus(await analyst.get(first.id), 200);
    expect(history.body).toMatchObject({ state: 'approved', factor: { id: firstFactor.id, state: 'superseded' } });
    const approvals = await w.prisma.auditEntry.findMany({ where: { entityId: { in: [first.id, second.id] }, action: 'approve' } });
    expect(approvals).toHaveLength(2);
    expect(approvals[0]).toMatchObject({ reason: 'Printout checked', actorId: w.cast.people.manager.id });
  });

  it('reads one calibration with its ETag and lists them with filters and cursor pages', async () => {
    const created = expectStatus(await analyst.create(pipetteRun(w, NETS, { performedAt: hoursAgo(30).toISOString() })), 201);
    const one = expectStatus(await manager.get(created.body.id), 200);
    expect(one.headers.etag).toBe('"v1"');

    const drafts = expectStatus(await analyst.list({ vesselId: w.pipette.id, state: 'draft' }), 200);
    expect(drafts.body.items.every((c: { state: string }) => c.state === 'draft')).toBe(true);
    expect(drafts.body.items[0]).not.toHaveProperty('inputs');

    const old = expectStatus(await analyst.list({ performedTo: hoursAgo(24).toISOString() }), 200);
    expect(old.body.items.map((c: { id: string }) => c.id)).toEqual([created.body.id]);

    const all = expectStatus(await manager.list({ labId: w.cast.lab.id }), 200);
    const seen: string[] = [];
    let cursor: string | null = null;
    do {
      const page = expectStatus(await manager.list({ labId: w.cast.lab.id, limit: '2', ...(cursor ? { cursor } : {}) }), 200);
      seen.push(...page.body.items.map((c: { id: string }) => c.id));
      cursor = page.body.nextCursor;
    } while (cursor);
    expect(seen).toEqual(all.body.items.map((c: { id: string }) => c.id));
    const times = all.body.items.map((c: { performedAt: string }) => c.performedAt);
    expect([...times].sort().reverse()).toEqual(times);
  });
});
