import { ManualClock } from '../../apps/api/src/common/clock';
import { auditAndLogText, bearer, seedCast } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

describe('service credentials', () => {
  const clock = new ManualClock(new Date('2026-04-14T06:30:00Z'));
  let t: TestApp;
  let cast: Cast;
  beforeAll(async () => {
    t = await startTestApp({}, { clock });
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  const as = (token: string) => ({
    get: (url: string) => t.http.get(url).set(bearer(token)),
    post: (url: string, body: object = {}) => t.http.post(url).set(bearer(token)).send(body),
  });
  const issue = (labIds: string[] | 'all' = [cast.lab.id]) =>
    as(cast.tokens.admin)
      .post('/v1/service-credentials', { name: 'Sample-management system', scopes: ['inventory:read'], labIds })
      .expect(201);

  it('issues a key shown once; lists and reads never show it again, nor the audit trail or the logs', async () => {
    const res = await issue();
    const { key, ...credential } = res.body;
    expect(key).toMatch(/^rk_[0-9a-f]{16}\.[A-Za-z0-9_-]{43}$/);
    expect(credential).toMatchObject({
      status: 'active',
      scopes: ['inventory:read'],
      labIds: [cast.lab.id],
      lastUsedAt: null,
      replacesId: null,
    });
    expect(key.startsWith(`rk_${credential.keyId}.`)).toBe(true);
    expect(res.headers.etag).toBe('"v1"');

    const labs = await as(key).get('/v1/labs').expect(200);
    expect(labs.body.items.map((l: { id: string }) => l.id)).toEqual([cast.lab.id]);

    const read = await as(cast.tokens.auditor).get(`/v1/service-credentials/${credential.id}`).expect(200);
    expect(read.body.lastUsedAt).toBe(clock.now().toISOString());
    const list = await as(cast.tokens.admin).get('/v1/service-credentials').expect(200);
    const secret = key.split('.')[1];
    for (const body of [read.body, list.body]) {
      expect(JSON.stringify(body)).not.toContain(secret);
      expect(JSON.stringify(body)).not.toMatch(/secretHash|key"/);
    }
    expect(await auditAndLogText(t.database.prisma, t.logs)).not.toContain(secret);
  });

  it('lets administrators issue and auditors read; managers and analysts get 403', async () => {
    await as(cast.tokens.auditor).get('/v1/service-credentials').expect(200);
    await as(cast.tokens.auditor)
      .post('/v1/service-credentials', { name: 'x', scopes: ['factors:read'], labIds: 'all' })
      .expect(403);
    for (const token of [cast.tokens.manager, cast.tokens.analyst]) await as(token).get('/v1/service-credentials').expect(403);
  });

  it.each([
    [{ name: 'x', scopes: [], labIds: 'all' }, 'scopes'],
    [{ name: 'x', scopes: ['everything'], labIds: 'all' }, 'scopes.0'],
    [{ name: 'x', scopes: ['factors:read', 'factors:read'], labIds: 'all' }, 'scopes'],
    [{ name: 'x', scopes: ['factors:read'], labIds: [] }, 'labIds'],
    [{ name: 'x', scopes: ['factors:read'], labIds: ['00000000-0000-4000-8000-000000000000'] }, 'labIds'],
    [{ name: 'x', scopes: ['factors:read'], labIds: 'all', secret: 'mine' }, 'secret'],
  ])('refuses %p with 400 naming %s', async (body, field) => {
    const res = await as(cast.tokens.admin).post('/v1/service-credentials', body).expect(400);
    expect(res.body.errors.map((e: { field: string }) => e.field)).toContain(field);
  });

  it('rotates: a new key replaces the old one, which stops working in the same step', async () => {
    const old = (await issue('all')).body;
    const rotated = await as(cast.tokens.admin).post(`/v1/service-credentials/${old.id}/rotate`).expect(201);
    expect(rotated.body).toMatchObject({ replacesId: old.id, labIds: 'all', scopes: ['inventory:read'], status: 'active' });
    expect(rotated.body.key).not.toBe(old.key);
    await as(old.key).get('/v1/labs').expect(401);
    await as(rotated.body.key).get('/v1/labs').expect(200);
    const before = await as(cast.tokens.admin).get(`/v1/service-credentials/${old.id}`).expect(200);
    expect(before.body).toMatchObject({ status: 'revoked', revokedAt: clock.now().toISOString(), version: 2 });
    await as(cast.tokens.admin).post(`/v1/service-credentials/${old.id}/rotate`).expect(409);
    const actions = await t.database.prisma.auditEntry.findMany({
      where: { entityType: 'service-credential', entityId: { in: [old.id, rotated.body.id] } },
      orderBy: { seq: 'asc' },
    });
    expect(actions.map((e) => `${e.action}:${e.entityId === old.id ? 'old' : 'new'}`)).toEqual(['create:old', 'create:new', 'rotate:old']);
  });

  it('revokes at once; revoking again changes nothing', async () => {
    const credential = (await issue()).body;
    await as(credential.key).get('/v1/labs').expect(200);
    const res = await as(cast.tokens.admin).post(`/v1/service-credentials/${credential.id}/revoke`).expect(200);
    expect(res.body).toMatchObject({ status: 'revoked', version: 2 });
    await as(credential.key).get('/v1/labs').expect(401);
    const again = await as(cast.tokens.admin).post(`/v1/service-credentials/${credential.id}/revoke`).expect(200);
    expect(again.body.version).toBe(2);
    await as(cast.tokens.manager).post(`/v1/service-credentials/${credential.id}/revoke`).expect(403);
    await as(cast.tokens.admin).post('/v1/service-credentials/00000000-0000-4000-8000-000000000000/revoke').expect(404);
    const revokes = await t.database.prisma.auditEntry.count({ where: { entityId: credential.id, action: 'revoke' } });
    expect(revokes).toBe(1);
  });

  it('filters by status and pages newest first', async () => {
    const active = await as(cast.tokens.admin).get('/v1/service-credentials?status=active&limit=1').expect(200);
    expect(active.body.items[0].status).toBe('active');
    const next = await as(cast.tokens.admin)
      .get(`/v1/service-credentials?status=active&limit=1&cursor=${active.body.nextCursor}`)
      .expect(200);
    expect(next.body.items[0].id).not.toBe(active.body.items[0].id);
    const revoked = await as(cast.tokens.admin).get('/v1/service-credentials?status=revoked').expect(200);
    expect(revoked.body.items.every((c: { status: string }) => c.status === 'revoked')).toBe(true);
  });
});
