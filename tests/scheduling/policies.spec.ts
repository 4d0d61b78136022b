import { seedBalance, seedBalanceCheck, seedFactor, seedInstrument, seedVessel } from '../support/factories';
import { day, schedulingWorld, type SchedulingWorld } from './support';

interface Due {
  subjectId: string;
  dueOn: string;
  dueSoonOn: string;
  intervalDays: number | null;
}

// Recalibration policies: who sets them, what they may hold, the log of interval changes, and adaptive intervals.
describe('recalibration policies', () => {
  let w: SchedulingWorld;
  const create = (body: object, who: Parameters<SchedulingWorld['post']>[1] = 'manager') => w.post('/v1/due-policies', who, body);
  const dueOf = async (subjectId: string, subjectKind = 'vessel'): Promise<Due | undefined> => {
    const res = await w.get('/v1/due', 'admin', { labId: w.cast.lab.id, subjectKind, limit: '200' });
    return (res.body.items as Due[]).find((i) => i.subjectId === subjectId);
  };

  beforeAll(async () => {
    w = await schedulingWorld();
  });
  afterAll(() => w.t.close());

  it('refuses inconsistent policies, naming the field, and writes nothing', async () => {
    const lab = w.cast.lab.id;
    const cases: [object, string][] = [
      [{ labId: lab, subjectKind: 'vessel', dueSoonDays: 30, reason: 'plan' }, 'intervalDays'],
      [{ labId: lab, subjectKind: 'factor', intervalDays: 365, dueSoonDays: 30, reason: 'plan' }, 'intervalDays'],
      [{ labId: lab, subjectKind: 'instrument', vesselKind: 'burette', intervalDays: 365, dueSoonDays: 30, reason: 'plan' }, 'vesselKind'],
      [{ labId: lab, subjectKind: 'vessel', intervalDays: 30, dueSoonDays: 30, reason: 'plan' }, 'dueSoonDays'],
      [{ labId: lab, subjectKind: 'vessel', intervalDays: 0, dueSoonDays: 0, reason: 'plan' }, 'intervalDays'],
      [{ labId: lab, subjectKind: 'vessel', intervalDays: 365, dueSoonDays: 30 }, 'reason'],
      [{ labId: lab, subjectKind: 'vessel', intervalDays: 365, dueSoonDays: 30, reason: 'plan', colour: 'red' }, 'colour'],
      [
        {
          labId: lab,
          subjectKind: 'balance-calibration',
          intervalDays: 365,
          dueSoonDays: 30,
          reason: 'plan',
          adaptive: { minIntervalDays: 180, maxIntervalDays: 730, maxStepDays: 60, lengthenAfterPasses: 2 },
        },
        'adaptive',
      ],
      [
        {
          labId: lab,
          subjectKind: 'vessel',
          intervalDays: 100,
          dueSoonDays: 30,
          reason: 'plan',
          adaptive: { minIntervalDays: 180, maxIntervalDays: 730, maxStepDays: 60, lengthenAfterPasses: 2 },
        },
        'intervalDays',
      ],
    ];
    for (const [body, field] of cases) {
      const res = await create(body);
      expect({ field, status: res.status }).toEqual({ field, status: 400 });
      expect(res.body.errors.map((e: { field: string }) => e.field)).toContain(field);
    }
    expect(await w.prisma.duePolicy.count()).toBe(0);
  });

  it('lets managers set their own lab’s policies and administrators any, audited with the reason and logged as an interval change', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id, { createdAt: new Date('2026-01-01T08:00:00Z') });
    const res = await create({
      labId: w.cast.lab.id,
      subjectKind: 'vessel',
      vesselKind: 'one-mark-pipette',
      accuracyClass: 'A',
      intervalDays: 180,
      dueSoonDays: 14,
      reason: 'Pipettes of class A twice a year',
    });
    expect(res.status).toBe(201);
    expect(res.headers.etag).toBe('"v1"');
    const policy = res.body as { id: string; version: number };
    const audit = await w.prisma.auditEntry.findFirst({ where: { entityType: 'due-policy', entityId: policy.id } });
    expect(audit).toMatchObject({ action: 'create', reason: 'Pipettes of class A twice a year', actorId: w.cast.people.manager.id });
    const changes = await w.get('/v1/interval-changes', 'auditor', { policyId: policy.id });
    expect(changes.body.items).toEqual([
      expect.objectContaining({
        method: 'policy',
        oldIntervalDays: null,
        newIntervalDays: 180,
        approvedById: w.cast.people.manager.id,
        subjectId: null,
      }),
    ]);
    // A never-calibrated vessel stays due from its registration; its lead time is the policy's.
    expect(await dueOf(vessel.id)).toMatchObject({ dueOn: '2026-01-01', dueSoonOn: '2025-12-18' });

    expect(
      (
        await create({
          labId: w.cast.lab.id,
          subjectKind: 'vessel',
          vesselKind: 'one-mark-pipette',
          accuracyClass: 'A',
          intervalDays: 90,
          dueSoonDays: 14,
          reason: 'again',
        })
      ).status,
    ).toBe(409);
    expect(
      (await create({ labId: w.cast.otherLab.id, subjectKind: 'vessel', intervalDays: 90, dueSoonDays: 14, reason: 'not mine' })).status,
    ).toBe(404);
    expect(
      (await create({ labId: w.cast.lab.id, subjectKind: 'instrument', intervalDays: 365, dueSoonDays: 30, reason: 'plan' }, 'analyst'))
        .status,
    ).toBe(403);
    expect(
      (await create({ labId: w.cast.lab.id, subjectKind: 'instrument', intervalDays: 365, dueSoonDays: 30, reason: 'plan' }, 'auditor'))
        .status,
    ).toBe(403);
    expect(
      (
        await create(
          { labId: w.cast.otherLab.id, subjectKind: 'instrument', intervalDays: 365, dueSoonDays: 30, reason: 'Annual plan' },
          'admin',
        )
      ).status,
    ).toBe(201);
    expect((await w.get(`/v1/due-policies/${policy.id}`, 'auditor')).status).toBe(200);
    expect((await w.get(`/v1/due-policies/${policy.id}`, 'otherManager')).status).toBe(404);
  });

  it('moves due dates when a policy changes: intervals from the last calibration or date, lead times of checks and factors', async () => {
    const lab = w.cast.lab.id;
    const thermometer = await seedInstrument(w.prisma, lab, { calibrationDate: day('2026-06-01') });
    const certified = await seedInstrument(w.prisma, lab, { calibrationDate: day('2026-06-01'), calibrationDue: day('2027-06-01') });
    expect(await dueOf(thermometer.id, 'instrument')).toMatchObject({ dueOn: '2027-06-01', intervalDays: 365 });
    const res = await create({
      labId: lab,
      subjectKind: 'instrument',
      intervalDays: 180,
      dueSoonDays: 20,
      reason: 'Thermometers every six months',
    });
    expect(res.status).toBe(201);
    expect(await dueOf(thermometer.id, 'instrument')).toMatchObject({ dueOn: '2026-11-28', dueSoonOn: '2026-11-08', intervalDays: 180 });
    // A due date on the certificate wins over the interval.
    expect(await dueOf(certified.id, 'instrument')).toMatchObject({ dueOn: '2027-06-01', intervalDays: null });

    w.clock.advance(60_000); // the change log lists newest first
    const patch = await w.t.http
      .patch(`/v1/due-policies/${res.body.id}`)
      .set('authorization', `Bearer ${await w.as('manager')}`)
      .set('if-match', '"v1"')
      .send({ intervalDays: 240, reason: 'Drift history is good' });
    expect(patch.status).toBe(200);
    expect(patch.body.version).toBe(2);
    expect(await dueOf(thermometer.id, 'instrument')).toMatchObject({ dueOn: '2027-01-27' });
    const log = await w.get('/v1/interval-changes', 'manager', { policyId: res.body.id });
    expect(
      log.body.items.map((c: { oldIntervalDays: number | null; newIntervalDays: number }) => [c.oldIntervalDays, c.newIntervalDays]),
    ).toEqual([
      [180, 240],
      [null, 180],
    ]);
    const stale = await w.t.http
      .patch(`/v1/due-policies/${res.body.id}`)
      .set('authorization', `Bearer ${await w.as('manager')}`)
      .set('if-match', '"v1"')
      .send({ dueSoonDays: 10, reason: 'Shorter notice' });
    expect(stale.status).toBe(412);

    // Routine checks keep the lab's window as their interval; the policy gives the lead time.
    const balance = await seedBalance(w.prisma, lab);
    await seedBalanceCheck(w.prisma, balance, w.cast.people.analyst.id, new Date('2026-11-30T08:00:00Z'));
    await w.prisma.lab.update({ where: { id: lab }, data: { balanceCheckWindowDays: 7 } });
    expect(await dueOf(balance.id, 'balance-check')).toMatchObject({ dueOn: '2026-12-07', dueSoonOn: '2026-12-07', intervalDays: 7 });
    expect((await create({ labId: lab, subjectKind: 'balance-check', dueSoonDays: 2, reason: 'Two days of notice' })).status).toBe(201);
    expect(await dueOf(balance.id, 'balance-check')).toMatchObject({ dueOn: '2026-12-07', dueSoonOn: '2026-12-05' });
    const factor = await seedFactor(w.prisma, {
      labId: lab,
      personId: w.cast.people.analyst.id,
      vesselId: (await seedVessel(w.prisma, lab)).id,
      validUntil: new Date('2027-03-01T12:00:00Z'),
    });
    expect((await create({ labId: lab, subjectKind: 'factor', dueSoonDays: 45, reason: 'Six weeks to recalibrate' })).status).toBe(201);
    expect(await dueOf(factor.id, 'factor')).toMatchObject({ dueOn: '2027-03-01', dueSoonOn: '2027-01-15' });
  });

  it('adapts a vessel’s interval by the staircase on reviewed results, recording each change with its approver, never lengthening on a failure', async () => {
    const lab = w.cast.lab.id;
    const res = await create({
      labId: lab,
      subjectKind: 'vessel',
      vesselKind: 'burette',
      intervalDays: 200,
      dueSoonDays: 14,
      adaptive: { minIntervalDays: 100, maxIntervalDays: 400, maxStepDays: 40, lengthenAfterPasses: 2 },
      reason: 'Burettes: adapt to their history',
    });
    expect(res.status).toBe(201);
    expect(res.body.adaptive).toMatchObject({ lengthenAfterPasses: 2, since: w.clock.now().toISOString() });
    const burette = await seedVessel(w.prisma, lab, { kind: 'burette', graduationIntervalMl: '0.1', nominalVolumeMl: '50' });
    const balance = await seedBalance(w.prisma, lab);
    const thermometer = await seedInstrument(w.prisma, lab);
    let at = new Date('2026-12-01T09:00:00Z');
    const calibrate = async (verdict: 'pass' | 'fail') => {
      // Approved calibrations are frozen once written: each is written with its verdict, as approval leaves it.
      const c = await w.prisma.calibration.create({
        data: {
          labId: lab,
          vesselId: burette.id,
          performerId: w.cast.people.analyst.id,
          enteredById: w.cast.people.analyst.id,
          balanceId: balance.id,
          thermometerId: thermometer.id,
          state: 'approved',
          performedAt: at,
          deliveryMode: 'deliver',
          inputs: { points: [] },
          results: { points: [] },
          verdict,
          libraryVersion: 'test',
          submittedAt: at,
          reviewerId: w.cast.people.manager.id,
          reviewedAt: w.clock.now(),
        },
      });
      at = new Date(at.getTime() + 86_400_000);
      w.clock.advance(60_000); // each change is logged at its own instant (newest first)
      return c;
    };
    await calibrate('pass');
    await w.scheduler.runPass();
    expect(await dueOf(burette.id)).toMatchObject({ intervalDays: 200, dueOn: '2027-06-19' });
    await calibrate('pass');
    await w.scheduler.runPass();
    await w.scheduler.runPass();
    // Two passes in a row: 200 d + a quarter (50 d) limited to the 40 d step.
    expect(await dueOf(burette.id)).toMatchObject({ intervalDays: 240, dueOn: '2027-07-30' });
    const fail = await calibrate('fail');
    await w.scheduler.runPass();
    // Failed: due the day of the failure; the interval halves (120 d) limited to the 40 d step.
    expect(await dueOf(burette.id)).toMatchObject({ intervalDays: 200, dueOn: '2026-12-03' });

    const log = await w.get('/v1/interval-changes', 'auditor', { subjectId: burette.id });
    const steps = log.body.items as {
      method: string;
      oldIntervalDays: number;
      newIntervalDays: number;
      approvedById: string;
      basedOnCalibrationId: string;
      reason: string;
    }[];
    expect(steps.map((s) => [s.method, s.oldIntervalDays, s.newIntervalDays])).toEqual([
      ['staircase', 240, 200],
      ['staircase', 200, 240],
    ]);
    expect(steps[0]).toMatchObject({ approvedById: w.cast.people.manager.id, basedOnCalibrationId: fail.id });
    expect(steps[0]?.reason).toMatch(/out of tolerance/);
    expect(await w.prisma.auditEntry.count({ where: { action: 'interval-change', entityId: burette.id } })).toBe(2);
    // Each result moves the interval once: the database refuses a second change for the same calibration.
    await expect(
      w.prisma.intervalChange.create({
        data: {
          labId: lab,
          policyId: res.body.id,
          subjectKind: 'vessel',
          subjectId: burette.id,
          method: 'staircase',
          oldIntervalDays: 200,
          newIntervalDays: 160,
          reason: 'again',
          approvedById: w.cast.people.manager.id,
          basedOnCalibrationId: fail.id,
          changedAt: new Date(),
        },
      }),
    ).rejects.toThrow();
    await expect(w.prisma.intervalChange.deleteMany({ where: { subjectId: burette.id } })).rejects.toThrow(/records/);
  });
});
