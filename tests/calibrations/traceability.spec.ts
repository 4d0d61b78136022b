import { seedBalance, seedBalanceCheck, seedInstrument, seedPassingBalanceCheck, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { type CalibrationWorld, calibrationsAs, calibrationWorld, DAY_MS, expectStatus, hoursAgo, pipetteRun } from './helpers';

const NETS = ['24.9400', '24.9450', '24.9500'];
const inDays = (days: number) => new Date(Date.now() + days * DAY_MS);

describe('traceability rules at submission', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let analyst: ReturnType<typeof calibrationsAs>;

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    analyst = calibrationsAs(t, w.cast.tokens.analyst);
  });
  afterAll(() => t.close());

  /** Creates a draft with these items (the world's traceable ones otherwise) and submits it. */
  async function submitUsing(items: { balanceId?: string; thermometerId?: string; vesselId?: string }, body: object = {}) {
    const created = expectStatus(await analyst.create(pipetteRun(w, NETS, items)), 201);
    return analyst.act(created.body.id, 'submit', created.headers.etag as string, body);
  }
  const balanceDueIn = (days: number) => seedBalance(w.prisma, w.cast.lab.id, { externalCalibrationDue: inDays(days) });

  it('names an overdue external calibration of the balance', async () => {
    const balance = await balanceDueIn(-2);
    await seedPassingBalanceCheck(w.prisma, balance, w.cast.people.manager.id, hoursAgo(2));
    const res = expectStatus(await submitUsing({ balanceId: balance.id }), 422);
    expect(res.body).toMatchObject({
      code: 'traceability-violation',
      type: '/problems/traceability-violation',
      exceptionPossible: false,
      violations: [{ rule: 'balance-calibration-current', itemId: balance.id, exceptionAllowed: true }],
    });
    expect(res.body.violations[0].detail).toMatch(/was due on \d{4}-\d{2}-\d{2}/);
  });

  it('needs a passing routine check of the balance within the lab’s window before the calibration', async () => {
    const unchecked = await balanceDueIn(300);
    const none = expectStatus(await submitUsing({ balanceId: unchecked.id }), 422);
    expect(none.body.violations).toEqual([
      expect.objectContaining({ rule: 'balance-check-passed', detail: expect.stringMatching(/No routine check/) }),
    ]);

    const failing = await balanceDueIn(300);
    await seedPassingBalanceCheck(w.prisma, failing, w.cast.people.manager.id, hoursAgo(5));
    await seedBalanceCheck(w.prisma, failing, w.cast.people.manager.id, hoursAgo(2), { passed: false });
    const failed = expectStatus(await submitUsing({ balanceId: failing.id }), 422);
    expect(failed.body.violations).toEqual([
      expect.objectContaining({ rule: 'balance-check-passed', detail: expect.stringMatching(/failed/) }),
    ]);

    const stale = await balanceDueIn(300);
    await seedPassingBalanceCheck(w.prisma, stale, w.cast.people.manager.id, hoursAgo(72));
    // A check made after the calibration does not vouch for it.
    await seedPassingBalanceCheck(w.prisma, stale, w.cast.people.manager.id, hoursAgo(0.5));
    const old = expectStatus(await submitUsing({ balanceId: stale.id }), 422);
    expect(old.body.violations).toEqual([
      expect.objectContaining({ rule: 'balance-check-passed', detail: expect.stringMatching(/older than the lab’s window of 1 day/) }),
    ]);
    await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { balanceCheckWindowDays: 7 } });
    try {
      expectStatus(await submitUsing({ balanceId: stale.id }), 200);
    } finally {
      await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { balanceCheckWindowDays: 1 } });
    }
  });

  it('refuses a quarantined vessel, never by exception', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id, { status: 'quarantined' });
    const res = expectStatus(await submitUsing({ vesselId: vessel.id }), 422);
    expect(res.body.violations).toEqual([
      { rule: 'vessel-in-service', itemId: vessel.id, detail: expect.any(String), exceptionAllowed: false },
    ]);
  });

  it('names an overdue thermometer, and every rule broken at once', async () => {
    const thermometer = await seedInstrument(w.prisma, w.cast.lab.id, { calibrationDue: inDays(-1) });
    const res = expectStatus(await submitUsing({ thermometerId: thermometer.id }), 422);
    expect(res.body.violations).toEqual([expect.objectContaining({ rule: 'thermometer-calibration-current', itemId: thermometer.id })]);

    const vessel = await seedVessel(w.prisma, w.cast.lab.id, { status: 'retired' });
    const balance = await seedBalance(w.prisma, w.cast.lab.id, { status: 'quarantined', externalCalibrationDue: inDays(-3) });
    const quarantinedThermometer = await seedInstrument(w.prisma, w.cast.lab.id, { status: 'quarantined' });
    const all = expectStatus(
      await submitUsing({ vesselId: vessel.id, balanceId: balance.id, thermometerId: quarantinedThermometer.id }),
      422,
    );
    expect(all.body.violations.map((v: { rule: string }) => v.rule)).toEqual([
      'vessel-in-service',
      'balance-in-service',
      'balance-calibration-current',
      'balance-check-passed',
      'thermometer-in-service',
      'thermometer-calibration-current',
    ]);
  });

  it('accepts a broken instrument rule with a reason where the lab allows exceptions, and records it', async () => {
    const thermometer = await seedInstrument(w.prisma, w.cast.lab.id, { calibrationDue: inDays(-1) });
    const notAllowed = expectStatus(
      await submitUsing({ thermometerId: thermometer.id }, { exceptionReason: 'Certificate in the post' }),
      422,
    );
    expect(notAllowed.body.detail).toMatch(/does not accept exceptions/);

    await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { allowTraceabilityExceptions: true } });
    try {
      const noReason = expectStatus(await submitUsing({ thermometerId: thermometer.id }), 422);
      expect(noReason.body).toMatchObject({ exceptionPossible: true });

      const accepted = expectStatus(
        await submitUsing({ thermometerId: thermometer.id }, { exceptionReason: 'Certificate in the post' }),
        200,
      );
      expect(accepted.body).toMatchObject({ state: 'submitted', traceabilityException: 'Certificate in the post' });
      expect(accepted.body.results.traceability).toMatchObject({
        exceptionReason: 'Certificate in the post',
        violations: [{ rule: 'thermometer-calibration-current', itemId: thermometer.id }],
      });
      const entry = await w.prisma.auditEntry.findFirst({ where: { entityId: accepted.body.id, action: 'submit' } });
      expect(entry).toMatchObject({ reason: 'Certificate in the post' });

      const vessel = await seedVessel(w.prisma, w.cast.lab.id, { status: 'quarantined' });
      const vesselRefused = expectStatus(await submitUsing({ vesselId: vessel.id }, { exceptionReason: 'We need it today' }), 422);
      expect(vesselRefused.body).toMatchObject({ exceptionPossible: false });
      expect(vesselRefused.body.detail).toMatch(/cannot be accepted by exception/);
    } finally {
      await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { allowTraceabilityExceptions: false } });
    }
  });
});
