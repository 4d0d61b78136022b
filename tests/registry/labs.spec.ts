import { bearer, seedCast, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

describe('labs and their members', () => {
  let t: TestApp;
  let cast: Cast;
  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  const as = (token: string) => ({
    get: (url: string) => t.http.get(url).set(bearer(token)),
    post: (url: string, body: object) => t.http.post(url).set(bearer(token)).send(body),
    put: (url: string, body: object) => t.http.put(url).set(bearer(token)).send(body),
    delete: (url: string) => t.http.delete(url).set(bearer(token)),
    patch: (url: string, body: object, etag?: string) => {
      const req = t.http.patch(url).set(bearer(token));
      return (etag ? req.set('if-match', etag) : req).send(body);
    },
  });
  const teaching = { code: 'TEACH-1', name: 'Teaching laboratory', timeZone: 'Europe/Vienna' };

  it('lets administrators create a lab, with an ETag; the code is unique', async () => {
    const res = await as(cast.tokens.admin).post('/v1/labs', teaching).expect(201);
    expect(res.body).toMatchObject({ ...teaching, fourEyesRequired: true, retiredAt: null, version: 1 });
    expect(res.headers.etag).toBe('"v1"');
    const again = await as(cast.tokens.admin)
      .post('/v1/labs', { ...teaching, name: 'Another' })
      .expect(409);
    expect(again.body.errors).toEqual([{ field: 'code', reason: 'already used' }]);
    const audit = await t.database.prisma.auditEntry.findFirstOrThrow({ where: { entityType: 'lab', entityId: res.body.id } });
    expect(audit).toMatchObject({ action: 'create', actorId: cast.people.admin.id, labId: res.body.id });
  });

  it.each([
    [{ ...teaching, code: 'teach' }, 'code'],
    [{ ...teaching, code: 'X' }, 'code'],
    [{ ...teaching, timeZone: 'Mars/Olympus_Mons' }, 'timeZone'],
    [{ ...teaching, timeZone: 'europe/vienna' }, 'timeZone'],
    [{ ...teaching, owner: 'me' }, 'owner'],
  ])('refuses %p with 400 naming %s', async (body, field) => {
    const res = await as(cast.tokens.admin).post('/v1/labs', body).expect(400);
    expect(res.body.errors.map((e: { field: string }) => e.field)).toContain(field);
  });

  it('lets no one else create a lab', async () => {
    for (const token of [cast.tokens.auditor, cast.tokens.manager, cast.tokens.analyst]) {
      await as(token)
        .post('/v1/labs', { ...teaching, code: 'NOPE' })
        .expect(403);
    }
  });

  it('lists and reads only the labs the caller may read; others are 404', async () => {
    const codes = async (token: string) => (await as(token).get('/v1/labs').expect(200)).body.items.map((l: { id: string }) => l.id);
    const all = (await t.database.prisma.lab.findMany()).map((l) => l.id);
    expect((await codes(cast.tokens.admin)).sort()).toEqual([...all].sort());
    expect((await codes(cast.tokens.auditor)).sort()).toEqual([...all].sort());
    expect(await codes(cast.tokens.manager)).toEqual([cast.lab.id]);
    expect(await codes(cast.tokens.analyst)).toEqual([cast.lab.id]);
    await as(cast.tokens.analyst).get(`/v1/labs/${cast.lab.id}`).expect(200);
    await as(cast.tokens.analyst).get(`/v1/labs/${cast.otherLab.id}`).expect(404);
    const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.otherLab.id]);
    expect(await codes(key)).toEqual([cast.otherLab.id]);
    await as(key).get(`/v1/labs/${cast.lab.id}`).expect(404);
  });

  it('pages through labs by code', async () => {
    const first = await as(cast.tokens.admin).get('/v1/labs?limit=1').expect(200);
    expect(first.body.items).toHaveLength(1);
    const second = await as(cast.tokens.admin).get(`/v1/labs?limit=1&cursor=${first.body.nextCursor}`).expect(200);
    expect(second.body.items[0].code > first.body.items[0].code).toBe(true);
    await as(cast.tokens.admin).get('/v1/labs?cursor=garbage').expect(400);
  });

  it('updates a lab with If-Match only: 428 without, 412 when stale; administrators only', async () => {
    const url = `/v1/labs/${cast.lab.id}`;
    const read = await as(cast.tokens.admin).get(url).expect(200);
    const etag = read.headers.etag as string;
    await as(cast.tokens.admin).patch(url, { fourEyesRequired: false }).expect(428);
    await as(cast.tokens.admin).patch(url, { fourEyesRequired: false }, '"v99"').expect(412);
    await as(cast.tokens.manager).patch(url, { fourEyesRequired: false }, etag).expect(403);
    await as(cast.tokens.auditor).patch(url, { fourEyesRequired: false }, etag).expect(403);
    await as(cast.tokens.otherManager).patch(url, { fourEyesRequired: false }, etag).expect(404);
    await as(cast.tokens.admin).patch(url, { code: 'NEW' }, etag).expect(400);
    const res = await as(cast.tokens.admin).patch(url, { fourEyesRequired: false, timeZone: 'UTC' }, etag).expect(200);
    expect(res.body).toMatchObject({ fourEyesRequired: false, timeZone: 'UTC', version: read.body.version + 1 });
    expect(res.headers.etag).toBe(`"v${read.body.version + 1}"`);
    await as(cast.tokens.admin).patch(url, { name: 'Late' }, etag).expect(412);
  });

  it('keeps the calibration policies of a lab: defaults, changes by administrators, validated and audited', async () => {
    const created = await as(cast.tokens.admin).post('/v1/labs', { code: 'POLICY-1', name: 'Policy lab', timeZone: 'UTC' }).expect(201);
    expect(created.body).toMatchObject({
      balanceCheckWindowDays: 1,
      factorValidityDays: 365,
      allowTraceabilityExceptions: false,
      quarantineOnFailedCalibration: true,
    });
    const changes = {
      balanceCheckWindowDays: 7,
      factorValidityDays: 180,
      allowTraceabilityExceptions: true,
      quarantineOnFailedCalibration: false,
    };
    const updated = await as(cast.tokens.admin).patch(`/v1/labs/${created.body.id}`, changes, created.headers.etag).expect(200);
    expect(updated.body).toMatchObject({ ...changes, version: 2 });
    const audit = await t.database.prisma.auditEntry.findFirstOrThrow({
      where: { entityType: 'lab', entityId: created.body.id, action: 'update' },
    });
    expect(audit.newValues).toMatchObject(changes);
    for (const bad of [{ factorValidityDays: 0 }, { balanceCheckWindowDays: 400 }, { factorValidityDays: 'a year' }]) {
      await as(cast.tokens.admin).patch(`/v1/labs/${created.body.id}`, bad, '"v2"').expect(400);
    }
  });

  it('shows members to administrators, auditors and the lab’s managers only', async () => {
    const url = `/v1/labs/${cast.lab.id}/members`;
    for (const token of [cast.tokens.admin, cast.tokens.auditor, cast.tokens.manager]) {
      const res = await as(token).get(url).expect(200);
      expect(res.body.items.map((m: { personId: string }) => m.personId).sort()).toEqual(
        [cast.people.manager.id, cast.people.analyst.id].sort(),
      );
    }
    await as(cast.tokens.analyst).get(url).expect(403);
    await as(cast.tokens.otherManager).get(url).expect(404);
  });

  it('lets the lab’s manager add, change and remove a member; the grant takes effect at once and is audited', async () => {
    const newcomer = await seedPerson(t.database.prisma, { displayName: 'Lena Novak' });
    const token = await sessionFor(t.database.prisma, newcomer.id);
    const url = `/v1/labs/${cast.lab.id}/members/${newcomer.id}`;
    await as(token).get(`/v1/labs/${cast.lab.id}`).expect(404);

    const added = await as(cast.tokens.manager).put(url, { role: 'analyst', externalRef: 'DWC-ANA-07' }).expect(200);
    expect(added.body).toMatchObject({ labId: cast.lab.id, personId: newcomer.id, role: 'analyst', externalRef: 'DWC-ANA-07' });
    await as(token).get(`/v1/labs/${cast.lab.id}`).expect(200);
    await as(cast.tokens.manager).put(url, { role: 'manager', externalRef: 'DWC-MGR-02' }).expect(200);

    const clash = await as(cast.tokens.admin)
      .put(`/v1/labs/${cast.lab.id}/members/${cast.people.analyst.id}`, { role: 'analyst', externalRef: 'DWC-MGR-02' })
      .expect(409);
    expect(clash.body.errors).toEqual([{ field: 'externalRef', reason: 'already used' }]);

    await as(cast.tokens.manager).delete(url).expect(204);
    await as(cast.tokens.manager).delete(url).expect(404);
    await as(token).get(`/v1/labs/${cast.lab.id}`).expect(404);
    const entries = await t.database.prisma.auditEntry.findMany({
      where: { entityType: 'lab-membership', entityId: `${cast.lab.id}/${newcomer.id}` },
      orderBy: { seq: 'asc' },
    });
    expect(entries.map((e) => e.action)).toEqual(['create', 'update', 'delete']);
    expect(entries.every((e) => e.labId === cast.lab.id && e.actorId === cast.people.manager.id)).toBe(true);
  });

  it('refuses membership changes to analysts, auditors (403) and other labs’ managers (404)', async () => {
    const person = await seedPerson(t.database.prisma);
    const url = `/v1/labs/${cast.lab.id}/members/${person.id}`;
    await as(cast.tokens.analyst).put(url, { role: 'analyst' }).expect(403);
    await as(cast.tokens.auditor).put(url, { role: 'analyst' }).expect(403);
    await as(cast.tokens.otherManager).put(url, { role: 'analyst' }).expect(404);
    await as(cast.tokens.otherManager).delete(`/v1/labs/${cast.lab.id}/members/${cast.people.analyst.id}`).expect(404);
    await as(cast.tokens.manager).put(url, { role: 'director' }).expect(400);
    await as(cast.tokens.manager)
      .put(`/v1/labs/${cast.lab.id}/members/00000000-0000-4000-8000-000000000000`, { role: 'analyst' })
      .expect(404);
  });
});
