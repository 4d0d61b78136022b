import { ManualClock } from '../../apps/api/src/common/clock';
import { bearer, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

describe('bearer authentication', () => {
  const clock = new ManualClock(new Date('2026-03-02T08:00:00Z'));
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ SESSION_IDLE_MINUTES: '30', SESSION_ABSOLUTE_HOURS: '12' }, { clock });
  });
  afterAll(() => t.close());

  it('refuses a request without a token with 401 and WWW-Authenticate', async () => {
    const res = await t.http.get('/v1/me').expect(401);
    expect(res.headers['www-authenticate']).toMatch(/^Bearer/);
    expect(res.body).toMatchObject({ code: 'unauthenticated' });
  });

  it.each([
    'Bearer',
    'Bearer nonsense',
    'Basic dXNlcjpwYXNz',
    `Bearer rs_${'A'.repeat(43)}`,
    `Bearer rk_0123456789abcdef.${'B'.repeat(43)}`,
  ])('refuses the malformed or unknown credential %p', async (header) => {
    await t.http.get('/v1/me').set('authorization', header).expect(401);
  });

  it('knows a signed-in person', async () => {
    const person = await seedPerson(t.database.prisma, { displayName: 'Ines Kovač' });
    const token = await sessionFor(t.database.prisma, person.id, clock.now());
    const res = await t.http.get('/v1/me').set(bearer(token)).expect(200);
    expect(res.body).toMatchObject({ id: person.id, displayName: 'Ines Kovač', registryRole: null, labs: [] });
  });

  it('ends a session after the idle timeout, and keeps it alive while used', async () => {
    const person = await seedPerson(t.database.prisma);
    const token = await sessionFor(t.database.prisma, person.id, clock.now());
    clock.advance(25 * 60_000);
    await t.http.get('/v1/me').set(bearer(token)).expect(200);
    clock.advance(25 * 60_000);
    await t.http.get('/v1/me').set(bearer(token)).expect(200);
    clock.advance(31 * 60_000);
    await t.http.get('/v1/me').set(bearer(token)).expect(401);
  });

  it('ends a session at its absolute expiry even when in use', async () => {
    const person = await seedPerson(t.database.prisma);
    const token = await sessionFor(t.database.prisma, person.id, clock.now());
    for (let i = 0; i < 25; i++) {
      clock.advance(29 * 60_000);
      const res = await t.http.get('/v1/me').set(bearer(token));
      if (res.status === 401) {
        expect(i * 29).toBeGreaterThanOrEqual(11 * 60);
        return;
      }
    }
    throw new Error('session never expired');
  });

  it('refuses a disabled person and a revoked session', async () => {
    const person = await seedPerson(t.database.prisma);
    const token = await sessionFor(t.database.prisma, person.id, clock.now());
    await t.database.prisma.person.update({ where: { id: person.id }, data: { status: 'disabled' } });
    await t.http.get('/v1/me').set(bearer(token)).expect(401);

    const other = await seedPerson(t.database.prisma);
    const otherToken = await sessionFor(t.database.prisma, other.id, clock.now());
    await t.database.prisma.session.updateMany({ where: { personId: other.id }, data: { revokedAt: clock.now() } });
    await t.http.get('/v1/me').set(bearer(otherToken)).expect(401);
  });

  it('keeps service credentials off routes meant for people, and refuses a revoked key', async () => {
    const admin = await seedPerson(t.database.prisma, { registryRole: 'administrator' });
    const { key, credential } = await seedCredential(t.database.prisma, admin.id, ['inventory:read']);
    const res = await t.http.get('/v1/me').set(bearer(key)).expect(403);
    expect(res.body.code).toBe('forbidden');
    await t.database.prisma.serviceCredential.update({ where: { id: credential.id }, data: { revokedAt: clock.now() } });
    // A key verified a moment ago is forgotten when the database announces the change, which
    // travels on the instance's listening connection (tests/registry/credential-cache.spec.ts).
    const deadline = Date.now() + 3000;
    let status = 0;
    while ((status = (await t.http.get('/v1/me').set(bearer(key))).status) !== 401 && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 20));
    }
    expect(status).toBe(401);
  });

  it('leaves health, metrics and docs public', async () => {
    await t.http.get('/health/live').expect(200);
    await t.http.get('/metrics').expect(200);
    await t.http.get('/openapi.json').expect(200);
    await t.http.get('/problems').expect(200);
  });
});

describe('a one-time password', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  it('opens only the password change, sign-out and who-am-I until it is replaced', async () => {
    const person = await seedPerson(t.database.prisma);
    await t.database.prisma.person.update({ where: { id: person.id }, data: { mustChangePassword: true } });
    const token = await sessionFor(t.database.prisma, person.id);
    const me = await t.http.get('/v1/me').set(bearer(token)).expect(200);
    expect(me.body.mustChangePassword).toBe(true);
    const refused = await t.http.get('/v1/labs').set(bearer(token)).expect(403);
    expect(refused.body).toMatchObject({ code: 'password-change-required', type: '/problems/password-change-required' });
    await t.database.prisma.person.update({ where: { id: person.id }, data: { mustChangePassword: false } });
    await t.http.get('/v1/labs').set(bearer(token)).expect(200);
  });
});
