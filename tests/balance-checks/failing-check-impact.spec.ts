import {
  bearer,
  seedBalance,
  seedCalibrationUsing,
  seedCast,
  seedCheckWeight,
  seedFactorFrom,
  seedInstrument,
  seedPerson,
  seedVessel,
} from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const DAY = 86_400_000;
const daysAgo = (d: number) => new Date(Date.now() - d * DAY);

// A failing check takes the balance out of use and shows what may be wrong because of it; a passing check
// brings it back only when a failed check (not a person) had quarantined it.
describe('a failing balance check: quarantine, impact, and the way back', () => {
  let t: TestApp;
  let cast: Cast;
  const post = (balanceId: string, body: Record<string, unknown>, token = cast.tokens.analyst) =>
    t.http.post(`/v1/balances/${balanceId}/checks`).set(bearer(token)).send(body);
  const quick = (weightId: string, readingG: string, performedAt: Date) => ({
    kind: 'quick',
    referenceWeightId: weightId,
    readingsG: [readingG],
    limitG: '0.0003',
    performedAt: performedAt.toISOString(),
  });

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  it('quarantines the balance and marks for review the factors from calibrations made since its last passing check', async () => {
    const prisma = t.database.prisma;
    const lab = cast.lab.id;
    const balance = await seedBalance(prisma, lab);
    const weight = await seedCheckWeight(prisma, lab);
    const thermometer = await seedInstrument(prisma, lab);
    const pipette = await seedVessel(prisma, lab);
    const flask = await seedVessel(prisma, lab, {
      assetTag: 'VF-100-001',
      kind: 'volumetric-flask',
      deliveryMode: 'contain',
      nominalVolumeMl: '100',
      limitMl: '0.1',
    });
    const burette = await seedVessel(prisma, lab, {
      assetTag: 'BUR-50-001',
      kind: 'burette',
      nominalVolumeMl: '50',
      graduationIntervalMl: '0.1',
      limitMl: '0.05',
    });
    const analyst = cast.people.analyst.id;
    const colleague = await seedPerson(prisma, { displayName: 'Second Analyst', labs: [{ labId: lab, role: 'analyst' }] });
    const using = { labId: lab, balanceId: balance.id, thermometerId: thermometer.id, reviewerId: cast.people.manager.id };

    // Before the last passing check: neither listed nor marked.
    const before = await seedCalibrationUsing(prisma, { ...using, vesselId: flask.id, performerId: analyst, performedAt: daysAgo(10) });
    const beforeFactor = await seedFactorFrom(prisma, before);
    // The last passing check, five days ago (100.000045 g read as 100.0001 g: 0.055 mg off, limit 0.3 mg).
    const pass = await post(balance.id, quick(weight.id, '100.0001', daysAgo(5))).expect(201);
    expect(pass.body).toMatchObject({ passed: true, impact: null, balanceStatus: { before: 'in-service', after: 'in-service' } });
    // Since then: an approved calibration with its current factor, a submitted one, a voided one, and one whose
    // factor an earlier finding already marked.
    const approved = await seedCalibrationUsing(prisma, { ...using, vesselId: pipette.id, performerId: analyst, performedAt: daysAgo(3) });
    const approvedFactor = await seedFactorFrom(prisma, approved);
    const submitted = await seedCalibrationUsing(prisma, {
      ...using,
      vesselId: burette.id,
      performerId: analyst,
      performedAt: daysAgo(2),
      state: 'submitted',
    });
    await seedCalibrationUsing(prisma, { ...using, vesselId: burette.id, performerId: analyst, performedAt: daysAgo(2), state: 'voided' });
    const earlier = await seedCalibrationUsing(prisma, {
      ...using,
      vesselId: pipette.id,
      performerId: colleague.id,
      performedAt: daysAgo(1),
    });
    const earlierFactor = await seedFactorFrom(prisma, earlier, {
      reviewRequiredAt: daysAgo(1),
      reviewReason: 'TH-07 found reading 0.4 K high',
    });
    // Another balance's calibration is not this one's impact.
    const otherBalance = await seedBalance(prisma, lab);
    await seedCalibrationUsing(prisma, {
      ...using,
      balanceId: otherBalance.id,
      vesselId: burette.id,
      performerId: analyst,
      performedAt: daysAgo(1),
    });

    // Now it reads 0.5 mg high: beyond the 0.3 mg limit.
    const fail = await post(balance.id, quick(weight.id, '100.000545', new Date())).expect(201);
    expect(fail.body).toMatchObject({
      passed: false,
      results: { readings: [{ deviationG: '0.0005', pass: false }], limitG: '0.0003', pass: false },
      balanceStatus: { before: 'in-service', after: 'quarantined', reason: expect.stringContaining(fail.body.id) },
    });
    const impact = fail.body.impact;
    expect(impact).toMatchObject({ subject: { kind: 'balance', id: balance.id }, since: pass.body.performedAt });
    expect(impact.reason).toContain(fail.body.id);
    expect(impact.calibrations.map((c: { id: string }) => c.id)).toEqual([approved.id, submitted.id, earlier.id]);
    expect(impact.calibrations[0]).toEqual({
      id: approved.id,
      vessel: { id: pipette.id, assetTag: pipette.assetTag },
      performer: { id: analyst, displayName: 'Bench Analyst' },
      performedAt: approved.performedAt.toISOString(),
      state: 'approved',
    });
    expect(impact.calibrations[1]).toMatchObject({ vessel: { assetTag: 'BUR-50-001' }, state: 'submitted' });
    const byId = Object.fromEntries(impact.factors.map((f: { id: string }) => [f.id, f]));
    expect(Object.keys(byId).sort()).toEqual([approvedFactor.id, earlierFactor.id].sort());
    expect(byId[approvedFactor.id]).toMatchObject({
      calibrationId: approved.id,
      personId: analyst,
      markedNow: true,
      reviewReason: impact.reason,
    });
    expect(byId[earlierFactor.id]).toMatchObject({ markedNow: false, reviewReason: 'TH-07 found reading 0.4 K high' });

    // In the database: the balance, the factors, and an audit entry for each write.
    expect((await prisma.balance.findUniqueOrThrow({ where: { id: balance.id } })).status).toBe('quarantined');
    const marked = await prisma.factor.findUniqueOrThrow({ where: { id: approvedFactor.id } });
    expect(marked.reviewReason).toContain(fail.body.id);
    expect(marked.reviewRequiredAt).not.toBeNull();
    expect(marked.state).toBe('current');
    expect((await prisma.factor.findUniqueOrThrow({ where: { id: beforeFactor.id } })).reviewRequiredAt).toBeNull();
    expect((await prisma.factor.findUniqueOrThrow({ where: { id: earlierFactor.id } })).reviewReason).toBe(
      'TH-07 found reading 0.4 K high',
    );
    const row = await prisma.balanceCheck.findUniqueOrThrow({ where: { id: fail.body.id } });
    expect(row).toMatchObject({
      passed: false,
      kind: 'quick',
      libraryVersion: '1.0.0',
      referenceWeightId: weight.id,
      performedById: analyst,
    });
    const entries = await prisma.auditEntry.findMany({ where: { requestId: { not: null } }, orderBy: { seq: 'asc' } });
    const ofFailure = entries.filter(
      (e) =>
        e.entityId === fail.body.id ||
        (e.newValues as { balanceCheckId?: string })?.balanceCheckId === fail.body.id ||
        e.reason === impact.reason,
    );
    expect(ofFailure.map((e) => [e.action, e.entityType, e.entityId])).toEqual([
      ['create', 'balance-check', fail.body.id],
      ['quarantine', 'balance', balance.id],
      ['mark-for-review', 'factor', approvedFactor.id],
    ]);
    const verification = await t.http.get('/v1/audit-trail/verification').set(bearer(cast.tokens.auditor)).expect(200);
    expect(verification.body.intact).toBe(true);

    // The record reads back the same, newest first in the list.
    const read = await t.http.get(`/v1/balances/${balance.id}/checks/${fail.body.id}`).set(bearer(cast.tokens.auditor)).expect(200);
    expect(read.body).toEqual(fail.body);
    const list = await t.http.get(`/v1/balances/${balance.id}/checks`).set(bearer(cast.tokens.analyst)).expect(200);
    expect(list.body.items.map((c: { id: string }) => c.id)).toEqual([fail.body.id, pass.body.id]);

    // A passing check afterwards returns it to service, saying why.
    const back = await post(balance.id, quick(weight.id, '100.0000', new Date())).expect(201);
    expect(back.body.balanceStatus).toEqual({
      before: 'quarantined',
      after: 'in-service',
      reason: expect.stringContaining(`after failed check ${fail.body.id}`),
    });
    expect((await prisma.balance.findUniqueOrThrow({ where: { id: balance.id } })).status).toBe('in-service');
    const restored = await prisma.auditEntry.findFirstOrThrow({ where: { entityId: balance.id, action: 'return-to-service' } });
    expect(restored.newValues).toMatchObject({ status: 'in-service', balanceCheckId: back.body.id });
  });

  it('returns a balance to service only with a check that tests what failed: a quick check does not answer USP <41>', async () => {
    const prisma = t.database.prisma;
    const balance = await seedBalance(prisma, cast.lab.id);
    const weight = await seedCheckWeight(prisma, cast.lab.id);
    const usp41 = (readingsG: string[], performedAt: Date) => ({
      kind: 'usp41',
      referenceWeightId: weight.id,
      repeatability: { readingsG, smallestNetWeightG: '0.1' },
      accuracyReadingG: '100.0001',
      performedAt: performedAt.toISOString(),
    });
    // s = 0.105 mg against a smallest net weight of 0.1 g: 2·s/m = 0.21 % > 0.10 % (see usp41-check.spec.ts).
    const noisy = Array.from({ length: 10 }, (_, i) => (i % 2 ? '100.0001' : '99.9999'));
    const fail = await post(balance.id, usp41(noisy, daysAgo(2))).expect(201);
    expect(fail.body.balanceStatus.after).toBe('quarantined');
    const quickPass = await post(balance.id, quick(weight.id, '100.0000', daysAgo(1))).expect(201);
    expect(quickPass.body).toMatchObject({
      passed: true,
      balanceStatus: { before: 'quarantined', after: 'quarantined', reason: expect.stringContaining('a USP <41> check does') },
    });
    const steady = Array.from({ length: 10 }, () => '100.0000');
    const usp41Pass = await post(balance.id, usp41(steady, new Date())).expect(201);
    expect(usp41Pass.body.balanceStatus).toMatchObject({ before: 'quarantined', after: 'in-service' });
  });

  it('keeps a balance that a manager quarantined by hand quarantined, whatever its checks say', async () => {
    const prisma = t.database.prisma;
    const balance = await seedBalance(prisma, cast.lab.id);
    const weight = await seedCheckWeight(prisma, cast.lab.id);
    await t.http
      .patch(`/v1/balances/${balance.id}`)
      .set(bearer(cast.tokens.manager))
      .set('if-match', '"v1"')
      .send({ status: 'quarantined', reason: 'Moved to room 2.12: level and adjust before use' })
      .expect(200);
    const fail = await post(balance.id, quick(weight.id, '100.0010', daysAgo(1))).expect(201);
    expect(fail.body.balanceStatus).toMatchObject({ before: 'quarantined', after: 'quarantined' });
    expect(fail.body.impact).toMatchObject({ since: null, calibrations: [], factors: [] });
    const pass = await post(balance.id, quick(weight.id, '100.0000', new Date())).expect(201);
    expect(pass.body.balanceStatus).toEqual({
      before: 'quarantined',
      after: 'quarantined',
      reason: expect.stringMatching(/by a person .*Moved to room 2\.12.*only the lab’s managers/),
    });
    expect((await prisma.balance.findUniqueOrThrow({ where: { id: balance.id } })).status).toBe('quarantined');
  });

  it('marks each factor once when two failing checks of the same balance race', async () => {
    const prisma = t.database.prisma;
    const lab = cast.lab.id;
    const balance = await seedBalance(prisma, lab);
    const weight = await seedCheckWeight(prisma, lab);
    const thermometer = await seedInstrument(prisma, lab);
    const vessel = await seedVessel(prisma, lab);
    const calibration = await seedCalibrationUsing(prisma, {
      labId: lab,
      balanceId: balance.id,
      thermometerId: thermometer.id,
      vesselId: vessel.id,
      performerId: cast.people.analyst.id,
      reviewerId: cast.people.manager.id,
      performedAt: daysAgo(1),
    });
    const factor = await seedFactorFrom(prisma, calibration);
    const at = new Date();
    const [a, b] = await Promise.all([
      post(balance.id, quick(weight.id, '100.0010', at)),
      post(balance.id, quick(weight.id, '100.0011', at), cast.tokens.manager),
    ]);
    expect([a.status, b.status]).toEqual([201, 201]);
    const flags = [a.body, b.body].map((r) => r.impact.factors[0].markedNow).sort();
    expect(flags).toEqual([false, true]);
    expect([a.body, b.body].map((r) => r.balanceStatus.after)).toEqual(['quarantined', 'quarantined']);
    expect(await prisma.auditEntry.count({ where: { entityId: factor.id, action: 'mark-for-review' } })).toBe(1);
    expect(await prisma.auditEntry.count({ where: { entityId: balance.id, action: 'quarantine' } })).toBe(1);
  });
});
