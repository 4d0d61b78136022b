import { seedCheckWeight, seedFactor, seedVessel } from '../support/factories';
import { day, schedulingWorld, type SchedulingWorld } from './support';

interface Notice {
  id: string;
  labId: string;
  eventKind: string;
  subjectKind: string;
  subjectId: string;
  personId: string | null;
  recipientIds: string[];
  acknowledgedAt: string | null;
  acknowledgedById: string | null;
}

// Stored notices: who sees which, filters, and acknowledgement (once, recorded and audited).
describe('notices', () => {
  let w: SchedulingWorld;
  let weightNotice: Notice;
  let factorNotice: Notice;
  let otherLabNotice: Notice;
  /** Lab A's notices: the weight's, the factor's, and those of the balance and thermometer behind the factor. */
  let labA: string[];
  const list = async (who: Parameters<SchedulingWorld['get']>[1], query: Record<string, string> = {}): Promise<Notice[]> => {
    const res = await w.get('/v1/notices', who, { limit: '200', ...query });
    expect(res.status).toBe(200);
    return res.body.items as Notice[];
  };

  beforeAll(async () => {
    w = await schedulingWorld();
    const lab = w.cast.lab.id;
    const weight = await seedCheckWeight(w.prisma, lab, { certificateDue: day('2026-11-20') });
    const factor = await seedFactor(w.prisma, {
      labId: lab,
      personId: w.cast.people.analyst.id,
      vesselId: (await seedVessel(w.prisma, lab)).id,
      validUntil: new Date('2026-12-10T12:00:00Z'),
    });
    const other = await seedCheckWeight(w.prisma, w.cast.otherLab.id, { certificateDue: day('2026-12-05') });
    await w.scheduler.runPass();
    const all = await list('admin');
    weightNotice = all.find((n) => n.subjectId === weight.id) as Notice;
    factorNotice = all.find((n) => n.subjectId === factor.id) as Notice;
    otherLabNotice = all.find((n) => n.subjectId === other.id) as Notice;
    labA = all
      .filter((n) => n.labId === lab)
      .map((n) => n.id)
      .sort();
  });
  afterAll(() => w.t.close());

  it('shows each person the notices addressed to them, managers their lab’s, administrators and auditors all', async () => {
    expect(weightNotice).toMatchObject({ eventKind: 'overdue', subjectKind: 'reference-weight', recipientIds: [w.cast.people.manager.id] });
    expect(factorNotice).toMatchObject({ eventKind: 'due-soon', subjectKind: 'factor', recipientIds: [w.cast.people.analyst.id] });
    expect(otherLabNotice).toMatchObject({ eventKind: 'due-soon', recipientIds: [w.cast.people.otherManager.id] });
    const ids = async (who: Parameters<SchedulingWorld['get']>[1]) => (await list(who)).map((n) => n.id).sort();
    expect(await ids('analyst')).toEqual([factorNotice.id]);
    expect(labA).toEqual(expect.arrayContaining([weightNotice.id, factorNotice.id]));
    expect(await ids('manager')).toEqual(labA);
    expect(await ids('otherManager')).toEqual([otherLabNotice.id]);
    expect(await ids('auditor')).toEqual([...labA, otherLabNotice.id].sort());
  });

  it('filters by lab, event, subject kind, person, acknowledgement and time raised', async () => {
    const ids = async (query: Record<string, string>) => (await list('admin', query)).map((n) => n.id).sort();
    expect(await ids({ labId: w.cast.lab.id })).toEqual(labA);
    expect(await ids({ eventKind: 'overdue', subjectKind: 'reference-weight' })).toEqual([weightNotice.id]);
    expect((await list('admin', { eventKind: 'due-soon' })).every((n) => n.eventKind === 'due-soon')).toBe(true);
    expect(await ids({ subjectKind: 'factor' })).toEqual([factorNotice.id]);
    expect(await ids({ personId: w.cast.people.analyst.id })).toEqual([factorNotice.id]);
    expect(await ids({ raisedFrom: '2026-12-01T07:00:00Z', raisedBefore: '2026-12-01T07:00:01Z' })).toHaveLength(labA.length + 1);
    expect(await ids({ raisedFrom: '2026-12-01T07:00:01Z' })).toEqual([]);
    const bad = await w.get('/v1/notices', 'admin', { acknowledged: 'maybe' });
    expect(bad.status).toBe(400);
    expect(bad.body.errors[0].field).toBe('acknowledged');
    expect((await w.get('/v1/notices', 'otherManager', { labId: w.cast.lab.id })).status).toBe(404);
  });

  it('is acknowledged once by a recipient or manager, with who and when, audited; auditors and outsiders may not', async () => {
    expect((await w.post(`/v1/notices/${factorNotice.id}/acknowledge`, 'auditor')).status).toBe(403);
    expect((await w.post(`/v1/notices/${factorNotice.id}/acknowledge`, 'otherManager')).status).toBe(404);
    expect((await w.post(`/v1/notices/${weightNotice.id}/acknowledge`, 'analyst')).status).toBe(404);

    w.clock.set(new Date('2026-12-01T09:15:00Z'));
    const res = await w.post(`/v1/notices/${factorNotice.id}/acknowledge`, 'analyst');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ acknowledgedAt: '2026-12-01T09:15:00.000Z', acknowledgedById: w.cast.people.analyst.id });
    const again = await w.post(`/v1/notices/${factorNotice.id}/acknowledge`, 'manager');
    expect(again.status).toBe(409);
    expect(again.body.code).toBe('invalid-state');
    const audit = await w.prisma.auditEntry.findMany({ where: { entityType: 'notice', entityId: factorNotice.id } });
    expect(audit).toEqual([expect.objectContaining({ action: 'acknowledge', actorId: w.cast.people.analyst.id })]);

    expect((await list('admin', { acknowledged: 'true' })).map((n) => n.id)).toEqual([factorNotice.id]);
    expect((await list('admin', { acknowledged: 'false' })).map((n) => n.id)).not.toContain(factorNotice.id);
    // The database keeps the first acknowledgement.
    await expect(
      w.prisma.notice.update({ where: { id: factorNotice.id }, data: { acknowledgedById: w.cast.people.manager.id } }),
    ).rejects.toThrow(/acknowledged once/);
  });
});
