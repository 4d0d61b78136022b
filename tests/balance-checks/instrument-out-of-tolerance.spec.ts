import {
  bearer,
  seedBalance,
  seedCalibrationUsing,
  seedCast,
  seedCredential,
  seedFactorFrom,
  seedInstrument,
  seedVessel,
} from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const DAY = 86_400_000;
const finding = { foundAt: new Date().toISOString(), reason: 'Reads 0.4 K high against the reference thermometer at 20 °C' };

// A thermometer found out of tolerance: quarantined, and the same impact list as a failed balance check for
// the calibrations that used it since its last calibration (the lab's calendar day, Europe/Vienna here).
describe('POST /v1/instruments/:instrumentId/out-of-tolerance', () => {
  let t: TestApp;
  let cast: Cast;
  const report = (instrumentId: string, body: Record<string, unknown> = finding, token = cast.tokens.manager) =>
    t.http.post(`/v1/instruments/${instrumentId}/out-of-tolerance`).set(bearer(token)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  /** A thermometer calibrated 20 days ago (a calendar date), and calibrations that used it around then. */
  async function thermometerWithHistory(overrides: Parameters<typeof seedInstrument>[2] = {}) {
    const prisma = t.database.prisma;
    const lab = cast.lab.id;
    const calibrationDate = new Date(Date.now() - 20 * DAY).toISOString().slice(0, 10);
    const thermometer = await seedInstrument(prisma, lab, {
      calibrationDate: new Date(`${calibrationDate}T00:00:00Z`),
      calibrationDue: new Date(Date.now() + 345 * DAY),
      ...overrides,
    });
    const balance = await seedBalance(prisma, lab);
    const using = {
      labId: lab,
      balanceId: balance.id,
      thermometerId: thermometer.id,
      performerId: cast.people.analyst.id,
      reviewerId: cast.people.manager.id,
    };
    const midnightUtc = Date.parse(`${calibrationDate}T00:00:00Z`);
    // 21:00 UTC the evening before is 22:00 or 23:00 in Vienna: still the previous day there.
    const before = await seedCalibrationUsing(prisma, {
      ...using,
      vesselId: (await seedVessel(prisma, lab)).id,
      performedAt: new Date(midnightUtc - 3 * 3_600_000),
    });
    // 23:30 UTC the evening before is already the calibration day in Vienna.
    const sameDay = await seedCalibrationUsing(prisma, {
      ...using,
      vesselId: (await seedVessel(prisma, lab)).id,
      performedAt: new Date(midnightUtc - 30 * 60_000),
    });
    const later = await seedCalibrationUsing(prisma, {
      ...using,
      vesselId: (await seedVessel(prisma, lab)).id,
      performedAt: new Date(Date.now() - 2 * DAY),
    });
    return {
      thermometer,
      before: { calibration: before, factor: await seedFactorFrom(prisma, before) },
      sameDay: { calibration: sameDay, factor: await seedFactorFrom(prisma, sameDay) },
      later: { calibration: later, factor: await seedFactorFrom(prisma, later) },
    };
  }

  it('quarantines the thermometer and marks the factors from calibrations since its last calibration day', async () => {
    const prisma = t.database.prisma;
    const h = await thermometerWithHistory();
    const res = await report(h.thermometer.id).expect(200);
    expect(res.body).toMatchObject({
      instrument: { id: h.thermometer.id, kind: 'thermometer', calibrationDate: h.thermometer.calibrationDate?.toISOString().slice(0, 10) },
      foundAt: finding.foundAt,
      reason: finding.reason,
      status: { before: 'in-service', after: 'quarantined' },
      impact: { subject: { kind: 'thermometer', id: h.thermometer.id } },
    });
    expect(res.body.impact.calibrations.map((c: { id: string }) => c.id)).toEqual([h.sameDay.calibration.id, h.later.calibration.id]);
    expect(res.body.impact.factors.map((f: { id: string; markedNow: boolean }) => [f.id, f.markedNow]).sort()).toEqual(
      [
        [h.sameDay.factor.id, true],
        [h.later.factor.id, true],
      ].sort(),
    );
    expect((await prisma.instrument.findUniqueOrThrow({ where: { id: h.thermometer.id } })).status).toBe('quarantined');
    expect((await prisma.factor.findUniqueOrThrow({ where: { id: h.before.factor.id } })).reviewRequiredAt).toBeNull();
    const marked = await prisma.factor.findUniqueOrThrow({ where: { id: h.later.factor.id } });
    expect(marked.reviewReason).toContain(h.thermometer.assetTag);
    expect(marked.reviewReason).toContain(finding.reason);
    const entry = await prisma.auditEntry.findFirstOrThrow({ where: { entityId: h.thermometer.id, action: 'out-of-tolerance' } });
    expect(entry).toMatchObject({
      actorId: cast.people.manager.id,
      reason: finding.reason,
      oldValues: { status: 'in-service' },
      newValues: { status: 'quarantined', foundAt: finding.foundAt },
    });
    expect(
      await prisma.auditEntry.count({ where: { action: 'mark-for-review', entityId: { in: [h.sameDay.factor.id, h.later.factor.id] } } }),
    ).toBe(2);
  });

  it('keeps a retired instrument retired and still marks the impact; without a calibration date every calibration counts', async () => {
    const h = await thermometerWithHistory({ status: 'retired', calibrationDate: null });
    const res = await report(h.thermometer.id).expect(200);
    expect(res.body.status).toMatchObject({ before: 'retired', after: 'retired' });
    expect(res.body.impact.since).toBeNull();
    expect(res.body.impact.calibrations).toHaveLength(3);
    // Reported again: nothing new to mark.
    const again = await report(h.thermometer.id).expect(200);
    expect(again.body.impact.factors.every((f: { markedNow: boolean }) => !f.markedNow)).toBe(true);
  });

  it('is for the lab’s managers and administrators only', async () => {
    const thermometer = await seedInstrument(t.database.prisma, cast.lab.id);
    await report(thermometer.id, finding, cast.tokens.analyst).expect(403);
    await report(thermometer.id, finding, cast.tokens.auditor).expect(403);
    await report(thermometer.id, finding, cast.tokens.otherManager).expect(404);
    const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read', 'corrections:write']);
    await report(thermometer.id, finding, key).expect(403);
    await report(thermometer.id, finding, cast.tokens.admin).expect(200);
  });

  it('needs a reason and a finding time that is not in the future', async () => {
    const thermometer = await seedInstrument(t.database.prisma, cast.lab.id);
    const res = await report(thermometer.id, { foundAt: finding.foundAt }).expect(400);
    expect(res.body.errors).toEqual([{ field: 'reason', reason: 'is required' }]);
    const future = await report(thermometer.id, { ...finding, foundAt: new Date(Date.now() + DAY).toISOString() }).expect(400);
    expect(future.body.errors[0].field).toBe('foundAt');
  });
});
