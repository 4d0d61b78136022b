import { lookupTolerance } from '@registry/metrology';

import { bearer, seedCast, seedCredential, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

describe('vessels', () => {
  let t: TestApp;
  let cast: Cast;
  let tag = 0;
  const nextTag = (prefix = 'PIP-25') => `${prefix}-${String(++tag).padStart(3, '0')}`;
  const pipette = (overrides: Record<string, unknown> = {}) => ({
    labId: cast.lab.id,
    assetTag: nextTag(),
    kind: 'one-mark-pipette',
    nominalVolumeMl: '25',
    accuracyClass: 'A',
    material: 'borosilicate-3-3',
    ...overrides,
  });
  const create = (body: Record<string, unknown>, token = cast.tokens.manager) => t.http.post('/v1/vessels').set(bearer(token)).send(body);
  const patch = (id: string, body: Record<string, unknown>, token = cast.tokens.manager, ifMatch: string | null = '"v1"') => {
    const req = t.http.patch(`/v1/vessels/${id}`).set(bearer(token));
    return (ifMatch === null ? req : req.set('if-match', ifMatch)).send(body);
  };

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  describe('create', () => {
    it('registers a one-mark pipette with the published class limit, naming the table', async () => {
      const res = await create(pipette({ makerSerial: '21.04-1187', location: 'Titration bench' })).expect(201);
      expect(res.headers.etag).toBe('"v1"');
      expect(res.headers.location).toBe(`/v1/vessels/${res.body.id}`);
      // ISO 648:2008 Table 1, class A, 25 mL: ± 0.030 mL. The metrology table holds this row "from memory";
      // the checked cross-reference is ASTM E969 class A 25 mL = ± 0.03 mL (R. B. Thompson, Illustrated Guide
      // to Home Chemistry Experiments, Table 3-1), compared below.
      const published = lookupTolerance({ kind: 'one-mark-pipette', accuracyClass: 'A', nominalVolumeMl: '25' });
      expect(published?.limitMl.toFixed()).toBe('0.03');
      expect(res.body).toMatchObject({
        labId: cast.lab.id,
        kind: 'one-mark-pipette',
        deliveryMode: 'deliver',
        nominalVolumeMl: '25',
        accuracyClass: 'A',
        classStandard: 'ISO 648:2008',
        material: 'borosilicate-3-3',
        expansionCoefficientPerK: '0.0000099',
        limitMl: published?.limitMl.toFixed(),
        limitSource: 'class-table',
        limitReason: null,
        limitReference: { standard: 'ISO 648:2008', tableId: 'iso-648-2008', verification: 'from-memory' },
        status: 'in-service',
        version: 1,
      });
    });

    it('looks the limit up in the US tables when the class refers to ASTM (checked value, ± 0.03 mL for 25 mL class A)', async () => {
      const res = await create(pipette({ classStandard: 'ASTM' })).expect(201);
      expect(res.body).toMatchObject({
        classStandard: 'ASTM E969',
        limitMl: '0.03',
        limitSource: 'class-table',
        limitReference: { standard: 'ASTM E969', verification: 'checked' },
      });
    });

    it('takes a lab override only with a reason', async () => {
      const refused = await create(pipette({ limitOverrideMl: '0.05' })).expect(400);
      expect(refused.body.errors).toEqual([expect.objectContaining({ field: 'limitOverrideReason' })]);
      const res = await create(pipette({ limitOverrideMl: 0.05, limitOverrideReason: 'Teaching lab: student practice pipettes' })).expect(
        201,
      );
      expect(res.body).toMatchObject({
        limitMl: '0.05',
        limitSource: 'lab-override',
        limitReason: 'Teaching lab: student practice pipettes',
        limitReference: null,
      });
    });

    it('has no limit when the tables know none (kind other, or a standard the tables do not hold)', async () => {
      const other = await create(
        pipette({
          kind: 'other',
          deliveryMode: 'contain',
          accuracyClass: 'none',
          nominalVolumeMl: '12.5',
          expansionCoefficientPerK: '0.00001',
          material: undefined,
        }),
      ).expect(201);
      expect(other.body).toMatchObject({ limitMl: null, limitSource: 'none', material: null, expansionCoefficientPerK: '0.00001' });
      const din = await create(pipette({ classStandard: 'DIN 12691' })).expect(201);
      expect(din.body).toMatchObject({ classStandard: 'DIN 12691', limitSource: 'none', limitMl: null });
    });

    it('derives the delivery mode from the kind and refuses a contradiction', async () => {
      const flask = await create(pipette({ assetTag: nextTag('VF-100'), kind: 'volumetric-flask', nominalVolumeMl: 100 })).expect(201);
      expect(flask.body).toMatchObject({ deliveryMode: 'contain', limitMl: '0.1', classStandard: 'ISO 1042:1998' });
      const wrong = await create(pipette({ deliveryMode: 'contain' })).expect(400);
      expect(wrong.body.errors).toEqual([expect.objectContaining({ field: 'deliveryMode' })]);
      const cylinder = await create(pipette({ kind: 'graduated-cylinder', nominalVolumeMl: 100, graduationIntervalMl: 1 })).expect(400);
      expect(cylinder.body.errors).toEqual([expect.objectContaining({ field: 'deliveryMode', reason: expect.stringMatching(/required/) })]);
    });

    it('needs a graduation interval for graduated kinds, no larger than the nominal volume', async () => {
      const missing = await create(pipette({ kind: 'burette', nominalVolumeMl: 50 })).expect(400);
      expect(missing.body.errors).toEqual([expect.objectContaining({ field: 'graduationIntervalMl' })]);
      await create(pipette({ kind: 'burette', nominalVolumeMl: 50, graduationIntervalMl: 60 })).expect(400);
      const ok = await create(pipette({ kind: 'burette', nominalVolumeMl: 50, graduationIntervalMl: '0.1' })).expect(201);
      expect(ok.body).toMatchObject({ graduationIntervalMl: '0.1', limitMl: '0.05', classStandard: 'ISO 385:2005' });
    });

    it('needs exactly one of material and expansionCoefficientPerK', async () => {
      const neither = await create(pipette({ material: undefined })).expect(400);
      expect(neither.body.errors[0].field).toBe('material');
      await create(pipette({ expansionCoefficientPerK: '0.0000099' })).expect(400);
      const unknown = await create(pipette({ material: 'unobtainium' })).expect(400);
      expect(unknown.body.errors[0].field).toBe('material');
    });

    it('refuses unknown members, wrong types and values that would not fit the column', async () => {
      const res = await create(pipette({ version: 7, colour: 'amber' })).expect(400);
      expect(res.body.code).toBe('validation-failed');
      expect(res.body.errors.map((e: { field: string }) => e.field).join(' ')).toMatch(/version|colour|\(body\)/);
      await create(pipette({ nominalVolumeMl: '25,0' })).expect(400);
      await create(pipette({ nominalVolumeMl: '0.0000001' })).expect(400);
      await create(pipette({ nominalVolumeMl: '1e9' })).expect(400);
      await create(pipette({ nominalVolumeMl: -25 })).expect(400);
      await create(pipette({ assetTag: 'has space' })).expect(400);
      await create(pipette({ notes: 'NUL \u0000 inside' })).expect(400);
    });

    it('answers 409 naming the asset tag when it is taken', async () => {
      const body = pipette();
      await create(body).expect(201);
      const res = await create({ ...body }).expect(409);
      expect(res.body).toMatchObject({ code: 'conflict', errors: [{ field: 'assetTag' }] });
    });

    it('lets only the lab’s managers and administrators create', async () => {
      await create(pipette(), cast.tokens.admin).expect(201);
      expect((await create(pipette(), cast.tokens.analyst).expect(403)).body.code).toBe('forbidden');
      await create(pipette(), cast.tokens.auditor).expect(403);
      await create(pipette(), cast.tokens.otherManager).expect(404);
      const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read']);
      await create(pipette(), key).expect(403);
    });
  });

  describe('read', () => {
    it('returns one vessel with its ETag to readers of the lab, 404 to others', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      for (const token of [cast.tokens.analyst, cast.tokens.manager, cast.tokens.auditor, cast.tokens.admin]) {
        const res = await t.http.get(`/v1/vessels/${v.id}`).set(bearer(token)).expect(200);
        expect(res.headers.etag).toBe('"v1"');
        expect(res.body.assetTag).toBe(v.assetTag);
      }
      const res = await t.http.get(`/v1/vessels/${v.id}`).set(bearer(cast.tokens.otherManager)).expect(404);
      expect(res.body.code).toBe('not-found');
      await t.http.get('/v1/vessels/5b1f7c3e-0000-4000-8000-000000000000').set(bearer(cast.tokens.admin)).expect(404);
      await t.http.get('/v1/vessels/not-a-uuid').set(bearer(cast.tokens.admin)).expect(400);
    });

    it('serves service credentials with inventory:read for the lab, and nobody else', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      const admin = cast.people.admin.id;
      const inLab = await seedCredential(t.database.prisma, admin, ['inventory:read'], [cast.lab.id]);
      const outOfLab = await seedCredential(t.database.prisma, admin, ['inventory:read'], [cast.otherLab.id]);
      const noScope = await seedCredential(t.database.prisma, admin, ['calculations:run']);
      await t.http.get(`/v1/vessels/${v.id}`).set(bearer(inLab.key)).expect(200);
      await t.http.get(`/v1/vessels/${v.id}`).set(bearer(outOfLab.key)).expect(404);
      await t.http.get(`/v1/vessels/${v.id}`).set(bearer(noScope.key)).expect(403);
      await t.http.get('/v1/vessels').set(bearer(noScope.key)).expect(403);
      const listed = await t.http.get('/v1/vessels?limit=200').set(bearer(outOfLab.key)).expect(200);
      expect(listed.body.items.every((i: { labId: string }) => i.labId === cast.otherLab.id)).toBe(true);
      await patch(v.id, { location: 'Bench 1' }, inLab.key).expect(403);
    });
  });

  describe('update', () => {
    it('needs If-Match: 428 without it, 412 when stale; the version increments', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      expect((await patch(v.id, { location: 'Bench 2' }, cast.tokens.manager, null).expect(428)).body.code).toBe('precondition-required');
      const ok = await patch(v.id, { location: 'Bench 2' }).expect(200);
      expect(ok.body).toMatchObject({ version: 2, location: 'Bench 2' });
      expect(ok.headers.etag).toBe('"v2"');
      expect((await patch(v.id, { location: 'Bench 3' }).expect(412)).body.code).toBe('precondition-failed');
      await patch(v.id, { location: 'Bench 3' }, cast.tokens.manager, '*').expect(412);
      await patch(v.id, { location: 'Bench 3' }, cast.tokens.manager, '"v2"').expect(200);
    });

    it('lets exactly one of two concurrent changes with the same If-Match win', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      const results = await Promise.all([
        patch(v.id, { location: 'Fume hood 1' }),
        patch(v.id, { location: 'Fume hood 2' }, cast.tokens.admin),
      ]);
      expect(results.map((r) => r.status).sort()).toEqual([200, 412]);
      const stored = await t.database.prisma.vessel.findUniqueOrThrow({ where: { id: v.id } });
      expect(stored.version).toBe(2);
      expect(stored.location).toBe(results.find((r) => r.status === 200)?.body.location);
    });

    it('lets an analyst change location and notes only, naming the refused field', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      const ok = await patch(v.id, { location: 'Shelf B', notes: 'Rinsed' }, cast.tokens.analyst).expect(200);
      expect(ok.body).toMatchObject({ location: 'Shelf B', notes: 'Rinsed', version: 2 });
      const status = await patch(v.id, { status: 'quarantined', reason: 'Chipped tip' }, cast.tokens.analyst, '"v2"').expect(403);
      expect(status.body.errors).toEqual([expect.objectContaining({ field: 'status' })]);
      const limit = await patch(v.id, { limitOverrideMl: '0.05', limitOverrideReason: 'Looser' }, cast.tokens.analyst, '"v2"').expect(403);
      expect(limit.body.errors.map((e: { field: string }) => e.field)).toEqual(['limitOverrideMl', 'limitOverrideReason']);
    });

    it('keeps auditors and other labs out', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      await patch(v.id, { notes: 'Looks fine' }, cast.tokens.auditor).expect(403);
      await patch(v.id, { notes: 'Looks fine' }, cast.tokens.otherManager).expect(404);
    });

    it('needs a reason to change status or limit, and records it with old and new values', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      const noReason = await patch(v.id, { status: 'quarantined' }).expect(400);
      expect(noReason.body.errors).toEqual([expect.objectContaining({ field: 'reason' })]);
      await patch(v.id, { status: 'quarantined', reason: 'Tip chipped during cleaning' }).expect(200);
      const entry = await t.database.prisma.auditEntry.findFirstOrThrow({
        where: { entityType: 'vessel', entityId: v.id, action: 'update' },
        orderBy: { seq: 'desc' },
      });
      expect(entry).toMatchObject({
        actorKind: 'person',
        actorId: cast.people.manager.id,
        labId: cast.lab.id,
        oldValues: { status: 'in-service', version: 1 },
        newValues: { status: 'quarantined', version: 2 },
        reason: 'Tip chipped during cleaning',
      });
      expect(entry.requestId).toBeTruthy();

      const override = await patch(
        v.id,
        { limitOverrideMl: '0.04', limitOverrideReason: 'Lab acceptance limit for routine titrations' },
        cast.tokens.manager,
        '"v2"',
      ).expect(200);
      expect(override.body).toMatchObject({ limitMl: '0.04', limitSource: 'lab-override', version: 3 });
      const back = await patch(v.id, { limitOverrideMl: null }, cast.tokens.manager, '"v3"').expect(400);
      expect(back.body.errors[0].field).toBe('reason');
      const restored = await patch(v.id, { limitOverrideMl: null, reason: 'Back to the class limit' }, cast.tokens.manager, '"v3"').expect(
        200,
      );
      expect(restored.body).toMatchObject({ limitMl: '0.03', limitSource: 'class-table', limitReason: null });
    });

    it('derives the limit again when the nominal volume or class changes', async () => {
      const created = await create(pipette()).expect(201);
      const res = await patch(created.body.id, {
        nominalVolumeMl: 10,
        accuracyClass: 'B',
        reason: 'Registered with the wrong size',
      }).expect(200);
      expect(res.body).toMatchObject({ nominalVolumeMl: '10', accuracyClass: 'B', limitMl: '0.04', classStandard: 'ISO 648:2008' });
      const flask = await patch(
        created.body.id,
        { kind: 'volumetric-flask', accuracyClass: 'A', reason: 'It is a flask' },
        cast.tokens.manager,
        '"v2"',
      ).expect(200);
      expect(flask.body).toMatchObject({ deliveryMode: 'contain', classStandard: 'ISO 1042:1998', limitMl: '0.025' });
    });

    it('writes the creation to the audit trail with the new values', async () => {
      const created = await create(pipette()).expect(201);
      const entry = await t.database.prisma.auditEntry.findFirstOrThrow({ where: { entityType: 'vessel', entityId: created.body.id } });
      expect(entry).toMatchObject({ action: 'create', oldValues: null, labId: cast.lab.id });
      expect(entry.newValues).toMatchObject({ assetTag: created.body.assetTag, limitMl: '0.03', limitSource: 'class-table', version: 1 });
    });

    it('never writes labId, version, id or timestamps, nor unknown members', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      for (const body of [
        { labId: cast.otherLab.id },
        { version: 9 },
        { id: v.id },
        { createdAt: '2020-01-01T00:00:00Z' },
        { location: 'x', extra: 1 },
        {},
      ]) {
        const res = await patch(v.id, body).expect(400);
        expect(res.body.code).toBe('validation-failed');
      }
      const stored = await t.database.prisma.vessel.findUniqueOrThrow({ where: { id: v.id } });
      expect(stored).toMatchObject({ labId: cast.lab.id, version: 1 });
    });

    it('answers 409 when renaming onto a taken asset tag', async () => {
      const a = await seedVessel(t.database.prisma, cast.lab.id);
      const b = await seedVessel(t.database.prisma, cast.lab.id);
      const res = await patch(b.id, { assetTag: a.assetTag }).expect(409);
      expect(res.body.errors).toEqual([expect.objectContaining({ field: 'assetTag' })]);
    });

    it('retires instead of deleting', async () => {
      const v = await seedVessel(t.database.prisma, cast.lab.id);
      await t.http
        .delete(`/v1/vessels/${v.id}`)
        .set(bearer(cast.tokens.admin))
        .expect((r) => expect([404, 405]).toContain(r.status));
      const res = await patch(v.id, { status: 'retired', reason: 'Broken' }).expect(200);
      expect(res.body.status).toBe('retired');
    });
  });
});
