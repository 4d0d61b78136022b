import { bearer, seedPerson, seedTraceableInstruments, seedVessel, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import {
  type CalibrationWorld,
  calibrationsAs,
  calibrationWorld,
  createAndSubmit,
  expectStatus,
  hoursAgo,
  pipetteRun,
  resultsOf,
} from './helpers';

const PASSING = ['24.9400', '24.9450', '24.9500'];
// 24.85 g × 1.0029 mL/g ≈ 24.922 mL: 0.078 mL short of 25 mL, beyond the ±0.03 mL of a class A pipette (ISO 648).
const FAILING = ['24.8490', '24.8500', '24.8510'];

describe('what approval and void do beyond the record', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let analyst: ReturnType<typeof calibrationsAs>;
  let colleague: ReturnType<typeof calibrationsAs>;
  let colleagueId: string;
  let manager: ReturnType<typeof calibrationsAs>;
  let admin: ReturnType<typeof calibrationsAs>;

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    analyst = calibrationsAs(t, w.cast.tokens.analyst);
    manager = calibrationsAs(t, w.cast.tokens.manager);
    admin = calibrationsAs(t, w.cast.tokens.admin);
    const person = await seedPerson(w.prisma, { displayName: 'Second Analyst', labs: [{ labId: w.cast.lab.id, role: 'analyst' }] });
    colleagueId = person.id;
    colleague = calibrationsAs(t, await sessionFor(w.prisma, person.id));
  });
  afterAll(() => t.close());

  it('a failed calibration gives no factor, quarantines the vessel and marks its current factors for review, all audited', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const good = await createAndSubmit(
      colleague,
      pipetteRun(w, PASSING, { vesselId: vessel.id, performedAt: hoursAgo(1.5).toISOString() }),
    );
    const colleagueFactor = expectStatus(await manager.act(good.id, 'approve', good.etag), 200).body.impact.factor.id as string;

    const bad = await createAndSubmit(analyst, pipetteRun(w, FAILING, { vesselId: vessel.id }));
    expect(bad.body).toMatchObject({ verdict: 'fail' });
    expect(resultsOf(bad.body).points[0]?.verdict.reasons.join(' ')).toMatch(/exceeds ±0.03 mL/);
    const approved = expectStatus(await manager.act(bad.id, 'approve', bad.etag, { note: 'Confirmed: tip chipped' }), 200);
    expect(approved.body).toMatchObject({ state: 'approved', verdict: 'fail', factor: null });
    expect(approved.body.impact).toMatchObject({
      factor: null,
      vesselQuarantined: true,
      review: { subject: { kind: 'vessel', id: vessel.id } },
    });
    expect(approved.body.impact.review.factors).toEqual([
      expect.objectContaining({
        id: colleagueFactor,
        personId: colleagueId,
        markedNow: true,
        reviewReason: expect.stringContaining(bad.id),
      }),
    ]);
    expect(approved.body.impact.review.calibrations.map((c: { id: string }) => c.id)).toEqual([good.id, bad.id]);

    expect(await w.prisma.factor.count({ where: { calibrationId: bad.id } })).toBe(0);
    expect(await w.prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } })).toMatchObject({ status: 'quarantined', version: 2 });
    const flagged = await w.prisma.factor.findUniqueOrThrow({ where: { id: colleagueFactor } });
    expect(flagged).toMatchObject({ state: 'current', reviewReason: expect.stringContaining(bad.id) });
    expect(flagged.reviewRequiredAt).not.toBeNull();

    const vesselEntry = await w.prisma.auditEntry.findFirst({ where: { entityId: vessel.id, entityType: 'vessel', action: 'update' } });
    expect(vesselEntry).toMatchObject({
      oldValues: { status: 'in-service' },
      newValues: { status: 'quarantined' },
      reason: expect.stringContaining(bad.id),
    });
    expect(await w.prisma.auditEntry.count({ where: { entityId: colleagueFactor, action: 'mark-for-review' } })).toBe(1);

    // The vessel is out of service now: the next calibration cannot be submitted until a manager returns it to service.
    const next = expectStatus(await analyst.create(pipetteRun(w, PASSING, { vesselId: vessel.id })), 201);
    const refused = expectStatus(await analyst.act(next.body.id, 'submit', next.headers.etag as string), 422);
    expect(refused.body.violations[0]).toMatchObject({ rule: 'vessel-in-service', itemId: vessel.id });
  });

  it('leaves the vessel in service when the lab does not quarantine on failure', async () => {
    await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { quarantineOnFailedCalibration: false } });
    try {
      const vessel = await seedVessel(w.prisma, w.cast.lab.id);
      const bad = await createAndSubmit(analyst, pipetteRun(w, FAILING, { vesselId: vessel.id }));
      const approved = expectStatus(await manager.act(bad.id, 'approve', bad.etag), 200);
      expect(approved.body.impact).toMatchObject({ factor: null, vesselQuarantined: false, review: { factors: [] } });
      expect(await w.prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } })).toMatchObject({ status: 'in-service' });
    } finally {
      await w.prisma.lab.update({ where: { id: w.cast.lab.id }, data: { quarantineOnFailedCalibration: true } });
    }
  });

  it('a calibration approved after its balance failed the next routine check gets a factor marked for review', async () => {
    // A balance of its own: the failure must not touch the other tests' balance.
    const { balance, thermometer } = await seedTraceableInstruments(w.prisma, w.cast.lab.id, w.cast.people.manager.id, hoursAgo(2));
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const cal = await createAndSubmit(
      analyst,
      pipetteRun(w, PASSING, { vesselId: vessel.id, balanceId: balance.id, thermometerId: thermometer.id }),
    );
    // The check after the calibration fails (recorded before the approval, so its impact had no factor to mark).
    const failedAt = hoursAgo(0.5);
    await w.prisma.balanceCheck.create({
      data: {
        labId: w.cast.lab.id,
        balanceId: balance.id,
        performedById: w.cast.people.manager.id,
        performedAt: failedAt,
        kind: 'quick',
        inputs: {},
        results: {},
        passed: false,
        libraryVersion: 'test',
      },
    });
    const approved = expectStatus(await manager.act(cal.id, 'approve', cal.etag), 200);
    const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id as string } });
    expect(factor.state).toBe('current');
    expect(factor.reviewRequiredAt).not.toBeNull();
    expect(factor.reviewReason).toBe(
      `Balance ${balance.assetTag} failed its routine check of ${failedAt.toISOString()}, the first after this calibration was performed`,
    );
    const lookup = await t.http
      .get('/v1/factors/current')
      .query({ personId: w.cast.people.analyst.id, vesselId: vessel.id })
      .set(bearer(w.cast.tokens.analyst))
      .expect(200);
    expect(lookup.body).toMatchObject({ reviewRequired: true, reviewReason: factor.reviewReason });
  });

  it('a calibration approved after its thermometer was found out of tolerance gets a factor marked for review', async () => {
    const { balance, thermometer } = await seedTraceableInstruments(w.prisma, w.cast.lab.id, w.cast.people.manager.id, hoursAgo(2));
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const cal = await createAndSubmit(
      analyst,
      pipetteRun(w, PASSING, { vesselId: vessel.id, balanceId: balance.id, thermometerId: thermometer.id }),
    );
    // Recorded while the calibration waited for approval (its impact had no factor to mark), and found before the
    // calibration was performed: the impact reaches every calibration since the thermometer's last calibration.
    const foundAt = hoursAgo(3).toISOString();
    const reason = 'Reads 0.4 K high against the reference thermometer';
    const finding = await t.http
      .post(`/v1/instruments/${thermometer.id}/out-of-tolerance`)
      .set(bearer(w.cast.tokens.manager))
      .send({ foundAt, reason })
      .expect(200);
    expect(finding.body.impact.calibrations.map((c: { id: string }) => c.id)).toContain(cal.id);
    expect(finding.body.impact.factors).toEqual([]);
    const approved = expectStatus(await manager.act(cal.id, 'approve', cal.etag), 200);
    const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id as string } });
    expect(factor.reviewRequiredAt).not.toBeNull();
    expect(factor.reviewReason).toBe(
      `Thermometer ${thermometer.assetTag} was found out of tolerance at ${foundAt} (${reason}); ` +
        'the finding reached this calibration, performed with it before it was recorded',
    );
  });

  it('a finding recorded while the calibration is being approved marks its factor, whichever commits first', async () => {
    for (let round = 0; round < 6; round++) {
      const { balance, thermometer } = await seedTraceableInstruments(w.prisma, w.cast.lab.id, w.cast.people.manager.id, hoursAgo(2));
      const vessel = await seedVessel(w.prisma, w.cast.lab.id);
      const cal = await createAndSubmit(
        analyst,
        pipetteRun(w, PASSING, { vesselId: vessel.id, balanceId: balance.id, thermometerId: thermometer.id }),
      );
      const [approved, finding] = await Promise.all([
        manager.act(cal.id, 'approve', cal.etag),
        t.http
          .post(`/v1/instruments/${thermometer.id}/out-of-tolerance`)
          .set(bearer(w.cast.tokens.manager))
          .send({ foundAt: hoursAgo(0.5).toISOString(), reason: `Round ${round}: reads high` }),
      ]);
      expect([approved.status, finding.status]).toEqual([200, 200]);
      const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id as string } });
      // Marked by the finding's impact (it committed second) or at issue (the approval committed second).
      expect(factor.reviewRequiredAt).not.toBeNull();
      expect(factor.reviewReason).toContain(thermometer.assetTag);
    }
  });

  it('a finding that reaches back only to the thermometer’s later recalibration leaves an earlier calibration’s factor unmarked', async () => {
    const { balance, thermometer } = await seedTraceableInstruments(w.prisma, w.cast.lab.id, w.cast.people.manager.id, hoursAgo(31));
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const cal = await createAndSubmit(
      analyst,
      pipetteRun(w, PASSING, {
        vesselId: vessel.id,
        balanceId: balance.id,
        thermometerId: thermometer.id,
        performedAt: hoursAgo(30).toISOString(),
      }),
    );
    // Recalibrated today (the lab's calendar day, Vienna): a finding now covers calibrations from today on.
    const today = new Intl.DateTimeFormat('en-CA', { timeZone: 'Europe/Vienna' }).format(new Date());
    await w.prisma.instrument.update({ where: { id: thermometer.id }, data: { calibrationDate: new Date(`${today}T00:00:00Z`) } });
    const finding = await t.http
      .post(`/v1/instruments/${thermometer.id}/out-of-tolerance`)
      .set(bearer(w.cast.tokens.manager))
      .send({ foundAt: hoursAgo(0.5).toISOString(), reason: 'Reads 0.4 K high' })
      .expect(200);
    expect(finding.body.impact.calibrations.map((c: { id: string }) => c.id)).not.toContain(cal.id);
    const approved = expectStatus(await manager.act(cal.id, 'approve', cal.etag), 200);
    const factor = await w.prisma.factor.findUniqueOrThrow({ where: { id: approved.body.impact.factor.id as string } });
    expect(factor).toMatchObject({ reviewRequiredAt: null, reviewReason: null });
  });

  it('voiding an approved calibration withdraws its current factor in the same step', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const cal = await createAndSubmit(analyst, pipetteRun(w, PASSING, { vesselId: vessel.id }));
    const approved = expectStatus(await manager.act(cal.id, 'approve', cal.etag), 200);
    const factorId = approved.body.impact.factor.id as string;
    const voided = expectStatus(
      await manager.act(cal.id, 'void', approved.headers.etag as string, { reason: 'Balance found out of tolerance' }),
      200,
    );
    expect(voided.body).toMatchObject({ state: 'voided', withdrawnFactorId: factorId, factor: { id: factorId, state: 'withdrawn' } });
    expect(await w.prisma.factor.findUniqueOrThrow({ where: { id: factorId } })).toMatchObject({ state: 'withdrawn' });
    const entry = await w.prisma.auditEntry.findFirst({ where: { entityId: factorId, action: 'withdraw' } });
    expect(entry?.reason).toMatch(/Balance found out of tolerance/);
  });

  it('two approvals racing for the same person and vessel end with exactly one current factor, the newest calibration’s', async () => {
    for (let round = 0; round < 3; round++) {
      const vessel = await seedVessel(w.prisma, w.cast.lab.id);
      const older = await createAndSubmit(
        analyst,
        pipetteRun(w, PASSING, { vesselId: vessel.id, performedAt: hoursAgo(1.5).toISOString() }),
      );
      const newer = await createAndSubmit(analyst, pipetteRun(w, PASSING, { vesselId: vessel.id, performedAt: hoursAgo(1).toISOString() }));
      const [a, b] = await Promise.all([manager.act(older.id, 'approve', older.etag), admin.act(newer.id, 'approve', newer.etag)]);
      expectStatus(a, 200);
      expectStatus(b, 200);
      const factors = await w.prisma.factor.findMany({ where: { personId: w.cast.people.analyst.id, vesselId: vessel.id } });
      expect(factors).toHaveLength(2);
      const current = factors.filter((f) => f.state === 'current');
      expect(current.map((f) => f.calibrationId)).toEqual([newer.id]);
      expect(factors.find((f) => f.calibrationId === older.id)).toMatchObject({ state: 'superseded', supersededById: current[0]?.id });
    }
  });

  it('one calibration approved twice at once: one approval wins, the other is told the record changed', async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const cal = await createAndSubmit(analyst, pipetteRun(w, PASSING, { vesselId: vessel.id }));
    const results = await Promise.all([manager.act(cal.id, 'approve', cal.etag), admin.act(cal.id, 'approve', cal.etag)]);
    expect(results.map((r) => r.status).sort()).toEqual([200, 412]);
    expect(await w.prisma.factor.count({ where: { calibrationId: cal.id } })).toBe(1);
  });
});
