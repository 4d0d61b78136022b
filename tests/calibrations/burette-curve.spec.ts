import { startTestApp, type TestApp } from '../support/test-app';
import {
  buretteRun,
  type CalibrationWorld,
  calibrationsAs,
  calibrationWorld,
  createAndSubmit,
  delivered,
  expectNear,
  expectStatus,
  pipetteRun,
  pointOf,
  resultsOf,
} from './helpers';

// Z at 20 °C and 101.3 kPa from the ISO 8655-6 annex table: 1.0029 mL/g (see one-mark-pipette.spec.ts).
const Z20 = 1.0029;
const Z_TOL = 0.51e-4;
const NETS = { '5': ['4.9900', '4.9920', '4.9910'], '25': ['24.9300', '24.9320', '24.9310'], '50': ['49.8700', '49.8720', '49.8710'] };

describe('a burette at 10 %, 50 % and 100 % of nominal: a correction curve', () => {
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

  it('computes each point against the burette’s own limit and approves it into a curve factor', async () => {
    const { id, etag, body } = await createAndSubmit(analyst, buretteRun(w, NETS));
    const results = resultsOf(body);
    expect(results.points.map((p: { nominalVolumeMl: string }) => p.nominalVolumeMl)).toEqual(['5', '25', '50']);
    for (const [i, volume] of (['5', '25', '50'] as const).entries()) {
      const meanNet = Number(NETS[volume][1]) - 0.001; // the three nets are mean ± 0.001 g
      expectNear(pointOf(results, i).meanVolumeMl, meanNet * Z20, meanNet * Z_TOL);
      expectNear(pointOf(results, i).systematicErrorMl, meanNet * Z20 - Number(volume), meanNet * Z_TOL);
      // ISO 385: the MPE of the 50 mL burette (±0.05 mL) applies at any point of the scale.
      expect(pointOf(results, i).verdict).toMatchObject({ verdict: 'pass', limitMl: '0.05', limitSource: 'table' });
    }
    expect(results).toMatchObject({ verdict: 'pass', acceptance: { limitMl: '0.05', limitSource: 'class-table' } });
    expect(results.acceptance.rule).toMatch(/any point of the scale/);

    const approved = expectStatus(await manager.act(id, 'approve', etag), 200);
    const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id } });
    expect(factor).toMatchObject({ kind: 'curve', state: 'current', personId: w.cast.people.analyst.id, vesselId: w.burette.id });
    const curve = factor.curve as { nominalVolumeMl: string; meanVolumeMl: string }[];
    expect(curve.map((p) => p.nominalVolumeMl)).toEqual(['5', '25', '50']);
    curve.forEach((p, i) => expect(p.meanVolumeMl).toBe(pointOf(results, i).meanVolumeMl));
  });

  it('refuses a single point, a volume above the nominal, a repeated volume and a missing volume', async () => {
    const base = buretteRun(w, NETS);
    const one = expectStatus(await analyst.create({ ...base, points: [base.points[2]] }), 400);
    expect(one.body.errors).toEqual([{ field: 'points', reason: expect.stringMatching(/two or more volumes/) }]);

    const above = expectStatus(
      await analyst.create({ ...base, points: [base.points[0], { nominalVolumeMl: '50.5', replicates: delivered(NETS['50']) }] }),
      400,
    );
    expect(above.body.errors).toEqual([{ field: 'points.1.nominalVolumeMl', reason: expect.stringMatching(/at most the nominal volume/) }]);

    const repeated = expectStatus(await analyst.create({ ...base, points: [base.points[1], { ...base.points[1] }] }), 400);
    expect(repeated.body.errors).toEqual([
      { field: 'points.1.nominalVolumeMl', reason: expect.stringMatching(/repeats the volume of point 0/) },
    ]);

    const missing = expectStatus(await analyst.create({ ...base, points: [base.points[0], { replicates: delivered(NETS['50']) }] }), 400);
    expect(missing.body.errors).toEqual([{ field: 'points.1.nominalVolumeMl', reason: expect.stringMatching(/is required/) }]);
  });

  it('refuses one-mark ware at more than one point or at another volume, and readings of the other delivery mode', async () => {
    const run = pipetteRun(w, ['24.94', '24.95']);
    const two = expectStatus(await analyst.create({ ...run, points: [...run.points, ...run.points] }), 400);
    expect(two.body.errors[0]).toMatchObject({ field: 'points', reason: expect.stringMatching(/at one point/) });

    const other = expectStatus(await analyst.create({ ...run, points: [{ ...run.points[0], nominalVolumeMl: '20' }] }), 400);
    expect(other.body.errors).toEqual([{ field: 'points.0.nominalVolumeMl', reason: expect.stringMatching(/nominal volume, 25 mL/) }]);

    const contain = [
      { filledG: '60', emptyG: '35', waterTemperatureC: '20' },
      { beforeG: '40', afterG: '64.9', waterTemperatureC: '20' },
    ];
    const wrong = expectStatus(await analyst.create({ ...run, points: [{ replicates: contain }] }), 400);
    expect(wrong.body.errors.map((e: { field: string }) => e.field).sort()).toEqual([
      'points.0.replicates.0.afterG',
      'points.0.replicates.0.beforeG',
      'points.0.replicates.0.emptyG',
      'points.0.replicates.0.filledG',
    ]);
  });

  it('bounds replicates to 2..30 and names a refused water temperature by its path (422)', async () => {
    const run = pipetteRun(w, ['24.94']);
    expectStatus(await analyst.create(run), 400);
    const many = pipetteRun(
      w,
      Array.from({ length: 31 }, () => '24.94'),
    );
    expectStatus(await analyst.create(many), 400);

    const hot = pipetteRun(w, ['24.94', '24.95']);
    hot.points[0]!.replicates[1]!.waterTemperatureC = '45';
    const refused = expectStatus(await analyst.create(hot), 422);
    expect(refused.body).toMatchObject({
      code: 'unprocessable-quantity',
      errors: [{ field: 'points.0.replicates.1.waterTemperatureC' }],
    });
  });

  it('needs a balance and a thermometer of the vessel’s lab, and a performance time that is not in the future', async () => {
    const run = pipetteRun(w, ['24.94', '24.95']);
    const barometer = await w.prisma.instrument.create({
      data: { labId: w.cast.lab.id, assetTag: `BARO-${Date.now()}`, kind: 'barometer' },
    });
    const otherBalance = await w.prisma.balance.create({
      data: { labId: w.cast.otherLab.id, assetTag: `BAL-X-${Date.now()}`, capacityG: '220', readabilityG: '0.0001' },
    });
    const res = expectStatus(await analyst.create({ ...run, balanceId: otherBalance.id, thermometerId: barometer.id }), 400);
    expect(res.body.errors.map((e: { field: string }) => e.field)).toEqual(['balanceId', 'thermometerId']);

    const future = expectStatus(await analyst.create({ ...run, performedAt: new Date(Date.now() + 3_600_000).toISOString() }), 400);
    expect(future.body.errors).toEqual([{ field: 'performedAt', reason: 'must not be in the future' }]);
  });
});
