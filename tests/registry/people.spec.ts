import { auditAndLogText, bearer, seedCast, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

describe('people', () => {
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
    patch: (url: string, body: object, etag?: string) => {
      const req = t.http.patch(url).set(bearer(token));
      return (etag ? req.set('if-match', etag) : req).send(body);
    },
  });

  it('registers a person with a one-time password shown once, and never again', async () => {
    const res = await as(cast.tokens.admin)
      .post('/v1/people', { email: 'Marta.Lindqvist@waterworks.example', displayName: 'Marta Lindqvist' })
      .expect(201);
    const { initialPassword, ...person } = res.body;
    expect(initialPassword).toMatch(/^[A-Za-z0-9-]{16,}$/);
    expect(person).toMatchObject({
      email: 'marta.lindqvist@waterworks.example',
      registryRole: null,
      status: 'active',
      mustChangePassword: true,
    });
    expect(res.headers.etag).toBe('"v1"');

    const signedIn = await t.http.post('/v1/sessions').send({ email: person.email, password: initialPassword }).expect(201);
    expect(signedIn.body.person.mustChangePassword).toBe(true);

    const later = [
      await as(cast.tokens.admin).get(`/v1/people/${person.id}`).expect(200),
      await as(cast.tokens.admin).get('/v1/people?limit=200'),
    ];
    for (const r of later) expect(JSON.stringify(r.body)).not.toContain(initialPassword);
    expect(await auditAndLogText(t.database.prisma, t.logs)).not.toContain(initialPassword);
    const stored = await t.database.prisma.person.findUniqueOrThrow({ where: { id: person.id } });
    expect(stored.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
  });

  it('refuses a duplicate email (in any case) with 409 naming the field', async () => {
    await as(cast.tokens.admin).post('/v1/people', { email: 'otto.reyes@waterworks.example', displayName: 'Otto Reyes' }).expect(201);
    const res = await as(cast.tokens.admin)
      .post('/v1/people', { email: 'OTTO.reyes@waterworks.example', displayName: 'Otto R.' })
      .expect(409);
    expect(res.body.errors).toEqual([{ field: 'email', reason: 'already used' }]);
  });

  it('lets only administrators register people, and refuses unknown fields', async () => {
    const body = { email: 'x.y@waterworks.example', displayName: 'X Y' };
    for (const token of [cast.tokens.auditor, cast.tokens.manager, cast.tokens.analyst])
      await as(token).post('/v1/people', body).expect(403);
    await as(cast.tokens.admin)
      .post('/v1/people', { ...body, passwordHash: 'x' })
      .expect(400);
    await as(cast.tokens.admin)
      .post('/v1/people', { ...body, registryRole: 'superuser' })
      .expect(400);
  });

  it('lists everyone for administrators and auditors, a lab’s people for its manager, oneself for an analyst', async () => {
    const ids = async (token: string) => {
      const seen: string[] = [];
      let cursor: string | null = null;
      do {
        const page = (
          await as(token)
            .get(`/v1/people?limit=2${cursor ? `&cursor=${cursor}` : ''}`)
            .expect(200)
        ).body as {
          items: { id: string }[];
          nextCursor: string | null;
        };
        seen.push(...page.items.map((p) => p.id));
        cursor = page.nextCursor;
      } while (cursor);
      return seen;
    };
    const { manager, analyst, otherManager } = cast.people;
    const total = await t.database.prisma.person.count();
    expect(await ids(cast.tokens.admin)).toHaveLength(total);
    expect(await ids(cast.tokens.auditor)).toHaveLength(total);
    expect((await ids(cast.tokens.manager)).sort()).toEqual([manager.id, analyst.id].sort());
    expect(await ids(cast.tokens.analyst)).toEqual([analyst.id]);
    expect(await ids(cast.tokens.otherManager)).toEqual([otherManager.id]);
    expect(new Set(await ids(cast.tokens.admin))).toEqual(new Set((await t.database.prisma.person.findMany()).map((p) => p.id)));
  });

  it('answers 404 for a person the caller may not see', async () => {
    await as(cast.tokens.manager).get(`/v1/people/${cast.people.analyst.id}`).expect(200);
    await as(cast.tokens.manager).get(`/v1/people/${cast.people.otherManager.id}`).expect(404);
    await as(cast.tokens.analyst).get(`/v1/people/${cast.people.manager.id}`).expect(404);
    await as(cast.tokens.auditor).get(`/v1/people/${cast.people.otherManager.id}`).expect(200);
  });

  it('needs If-Match to change a person: 428 without, 412 when stale, 403 for non-administrators', async () => {
    const person = await seedPerson(t.database.prisma, { labs: [{ labId: cast.lab.id, role: 'analyst' }] });
    const url = `/v1/people/${person.id}`;
    await as(cast.tokens.admin).patch(url, { displayName: 'Ana Lyst' }).expect(428);
    await as(cast.tokens.admin).patch(url, { displayName: 'Ana Lyst' }, '"v7"').expect(412);
    await as(cast.tokens.manager).patch(url, { displayName: 'Ana Lyst' }, '"v1"').expect(403);
    await as(cast.tokens.otherManager).patch(url, { displayName: 'Ana Lyst' }, '"v1"').expect(404);
    const res = await as(cast.tokens.admin).patch(url, { displayName: 'Ana Lyst', registryRole: 'auditor' }, '"v1"').expect(200);
    expect(res.headers.etag).toBe('"v2"');
    expect(res.body).toMatchObject({ displayName: 'Ana Lyst', registryRole: 'auditor', version: 2 });
    await as(cast.tokens.admin).patch(url, { status: 'unknown' }, '"v2"').expect(400);
  });

  it('ends every session of a person at once when disabling them', async () => {
    const person = await seedPerson(t.database.prisma);
    const tokens = [await sessionFor(t.database.prisma, person.id), await sessionFor(t.database.prisma, person.id)];
    for (const token of tokens) await t.http.get('/v1/me').set(bearer(token)).expect(200);
    await as(cast.tokens.admin).patch(`/v1/people/${person.id}`, { status: 'disabled' }, '"v1"').expect(200);
    expect(await t.database.prisma.session.count({ where: { personId: person.id, revokedAt: null } })).toBe(0);
    await t.database.prisma.person.update({ where: { id: person.id }, data: { status: 'active' } });
    for (const token of tokens) await t.http.get('/v1/me').set(bearer(token)).expect(401);
    const entry = await t.database.prisma.auditEntry.findFirstOrThrow({ where: { entityId: person.id, action: 'update' } });
    expect(entry.oldValues).toMatchObject({ status: 'active' });
    expect(entry.newValues).toMatchObject({ status: 'disabled', sessionsEnded: 2 });
  });

  it('keeps the last active administrator: no self-disabling or self-demotion while alone', async () => {
    const solo = await startTestApp();
    try {
      const admin = await seedPerson(solo.database.prisma, { registryRole: 'administrator' });
      const token = await sessionFor(solo.database.prisma, admin.id);
      const url = `/v1/people/${admin.id}`;
      const demote = await solo.http.patch(url).set(bearer(token)).set('if-match', '"v1"').send({ registryRole: null }).expect(409);
      expect(demote.body.errors).toEqual([{ field: 'registryRole', reason: expect.stringMatching(/without an active administrator/) }]);
      await solo.http.patch(url).set(bearer(token)).set('if-match', '"v1"').send({ status: 'disabled' }).expect(409);
      await seedPerson(solo.database.prisma, { registryRole: 'administrator' });
      await solo.http.patch(url).set(bearer(token)).set('if-match', '"v1"').send({ registryRole: 'auditor' }).expect(200);
    } finally {
      await solo.close();
    }
  });

  it('keeps service credentials away from people', async () => {
    const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read', 'factors:read']);
    await as(key).get('/v1/people').expect(403);
  });
});
