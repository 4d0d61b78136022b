import type { SystemContext } from '../../apps/api/src/auth/actor';
import { ImpactService } from '../../apps/api/src/impact/impact.service';
import { seedBalance, seedCalibrationUsing, seedCast, seedFactorFrom, seedInstrument, seedPerson, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const DAY = 86_400_000;
const daysAgo = (d: number) => new Date(Date.now() - d * DAY);

// ImpactService.forVessel, as the calibration records call it when a vessel fails its calibration: every
// person's current factor for the vessel from calibrations since the given instant, inside the caller's transaction.
describe('ImpactService.forVessel', () => {
  let t: TestApp;

  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  it('marks every person’s current factor for the vessel since the instant, and rolls back with the caller', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const lab = cast.lab.id;
    const vessel = await seedVessel(prisma, lab);
    const colleague = await seedPerson(prisma, { labs: [{ labId: lab, role: 'analyst' }] });
    const using = {
      labId: lab,
      vesselId: vessel.id,
      balanceId: (await seedBalance(prisma, lab)).id,
      thermometerId: (await seedInstrument(prisma, lab)).id,
      reviewerId: cast.people.manager.id,
    };
    const old = await seedCalibrationUsing(prisma, { ...using, performerId: cast.people.analyst.id, performedAt: daysAgo(200) });
    const mine = await seedCalibrationUsing(prisma, { ...using, performerId: cast.people.analyst.id, performedAt: daysAgo(20) });
    const theirs = await seedCalibrationUsing(prisma, { ...using, performerId: colleague.id, performedAt: daysAgo(10) });
    await prisma.factor.create({
      data: {
        labId: lab,
        personId: old.performerId,
        vesselId: vessel.id,
        calibrationId: old.id,
        kind: 'single',
        factor: '0.9995',
        correctionMl: '-0.0125',
        expandedUncertaintyMl: '0.012',
        coverageFactor: '2',
        validFrom: old.performedAt,
        validUntil: daysAgo(-165),
        state: 'superseded',
        endedAt: mine.performedAt,
      },
    });
    const myFactor = await seedFactorFrom(prisma, mine);
    const theirFactor = await seedFactorFrom(prisma, theirs);
    const impact = t.app.get(ImpactService);
    const system: SystemContext = { actor: { kind: 'system' }, requestId: null };
    const reason = `${vessel.assetTag} failed its calibration`;

    // A caller whose transaction fails leaves nothing marked.
    await expect(
      prisma.$transaction(async (tx) => {
        await impact.forVessel(tx, system, vessel.id, daysAgo(30), reason);
        throw new Error('the calibration could not be saved');
      }),
    ).rejects.toThrow('could not be saved');
    expect(await prisma.factor.count({ where: { vesselId: vessel.id, reviewRequiredAt: { not: null } } })).toBe(0);

    const view = await prisma.$transaction((tx) => impact.forVessel(tx, system, vessel.id, daysAgo(30), reason));
    expect(view.subject).toEqual({ kind: 'vessel', id: vessel.id });
    expect(view.calibrations.map((c) => c.id)).toEqual([mine.id, theirs.id]);
    expect(view.factors.map((f) => f.id).sort()).toEqual([myFactor.id, theirFactor.id].sort());
    expect(view.factors.every((f) => f.markedNow && f.reviewReason === reason)).toBe(true);
    const entries = await prisma.auditEntry.findMany({
      where: { action: 'mark-for-review', entityId: { in: [myFactor.id, theirFactor.id] } },
    });
    expect(entries).toHaveLength(2);
    expect(entries[0]).toMatchObject({ actorKind: 'system', entityType: 'factor', labId: lab, reason });
  });
});
