import { Client } from 'pg';

import { CredentialCache } from '../../apps/api/src/auth/credential-cache';
import { ManualClock } from '../../apps/api/src/common/clock';
import { bearer, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

/*
 * Service credentials are reused for CREDENTIAL_CACHE_SECONDS (30 by default) once verified, so the
 * factor service does not read the credential row on every call. A revocation must still end the
 * key's use at once: through the API in this instance, through the database's announcement
 * (trigger + LISTEN/NOTIFY) in every instance, and nothing is reused while that channel is down.
 */

const START = new Date('2026-06-01T08:00:00Z');
const ROUTE = '/v1/vessels';

async function ownerSql<T>(t: TestApp, fn: (c: Client) => Promise<T>): Promise<T> {
  const c = new Client({ connectionString: t.testDatabase.url });
  await c.connect();
  try {
    return await fn(c);
  } finally {
    await c.end();
  }
}

/** Revokes the key with the change announcement switched off: only the cache's own age can end its use. */
async function revokeUnannounced(t: TestApp, credentialId: string): Promise<void> {
  await ownerSql(t, async (c) => {
    await c.query('BEGIN');
    await c.query('ALTER TABLE service_credentials DISABLE TRIGGER service_credentials_announce_update');
    await c.query('UPDATE service_credentials SET revoked_at = now() WHERE id = $1', [credentialId]);
    await c.query('ALTER TABLE service_credentials ENABLE TRIGGER service_credentials_announce_update');
    await c.query('COMMIT');
  });
}

async function until(condition: () => boolean | Promise<boolean>, timeoutMs = 5000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (Date.now() > deadline) throw new Error('condition not met in time');
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('service credential cache (CREDENTIAL_CACHE_SECONDS = 30)', () => {
  const clock = new ManualClock(START);
  let t: TestApp;
  let adminId: string;
  let cache: CredentialCache;

  beforeAll(async () => {
    t = await startTestApp({}, { clock });
    adminId = (await seedPerson(t.database.prisma, { registryRole: 'administrator' })).id;
    cache = t.app.get(CredentialCache);
    await until(() => cache.active);
  });
  afterAll(() => t.close());
  beforeEach(() => clock.set(START));

  it('reuses a verified key without reading it again, for less than the configured time', async () => {
    const { key, credential } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    await revokeUnannounced(t, credential.id);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    clock.advance(29_999);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    clock.advance(1);
    await t.http.get(ROUTE).set(bearer(key)).expect(401);
  });

  it('still checks the secret of a reused key', async () => {
    const { key } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    const [keyId, secret] = key.split('.') as [string, string];
    const forged = `${keyId}.${secret.startsWith('A') ? 'B' : 'A'}${secret.slice(1)}`;
    await t.http.get(ROUTE).set(bearer(forged)).expect(401);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
  });

  it('forgets a key at once when it is revoked or rotated through the API', async () => {
    const token = await sessionFor(t.database.prisma, adminId, START);
    for (const action of ['revoke', 'rotate']) {
      const { key, credential } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
      await t.http.get(ROUTE).set(bearer(key)).expect(200);
      const done = await t.http.post(`/v1/service-credentials/${credential.id}/${action}`).set(bearer(token));
      expect([200, 201]).toContain(done.status);
      await t.http.get(ROUTE).set(bearer(key)).expect(401);
    }
  });

  it('forgets a key when the database announces a change made by anyone, without waiting for its age', async () => {
    const { key, credential } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    await ownerSql(t, (c) => c.query('UPDATE service_credentials SET revoked_at = now() WHERE id = $1', [credential.id]));
    // The announcement travels on another connection: allow it a moment, with the clock standing still.
    await until(async () => (await t.http.get(ROUTE).set(bearer(key))).status === 401, 3000);
  });

  it('announces nothing when only the last use is recorded', async () => {
    const { key, credential } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    await ownerSql(t, async (c) => {
      await c.query('LISTEN registry_credentials');
      const heard: string[] = [];
      c.on('notification', (n) => heard.push(n.payload ?? ''));
      await c.query('UPDATE service_credentials SET last_used_at = now() WHERE id = $1', [credential.id]);
      await c.query('UPDATE service_credentials SET revoked_at = now() WHERE id = $1', [credential.id]);
      await until(() => heard.length > 0);
      expect(heard).toEqual([credential.keyId]);
    });
  });

  it('reads every key from the database while the announcement channel is down, and reconnects by itself', async () => {
    const { key, credential } = await seedCredential(t.database.prisma, adminId, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    const ended = await ownerSql(t, (c) =>
      c.query(
        `SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = current_database() AND query = 'LISTEN registry_credentials'`,
      ),
    );
    expect(ended.rowCount).toBe(1);
    await until(() => !cache.active);
    await revokeUnannounced(t, credential.id);
    await t.http.get(ROUTE).set(bearer(key)).expect(401);
    await until(() => cache.active);
  });
});

describe('service credential cache switched off (CREDENTIAL_CACHE_SECONDS = 0)', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ CREDENTIAL_CACHE_SECONDS: '0' });
  });
  afterAll(() => t.close());

  it('reads the key on every request', async () => {
    const admin = await seedPerson(t.database.prisma, { registryRole: 'administrator' });
    const { key, credential } = await seedCredential(t.database.prisma, admin.id, ['inventory:read']);
    await t.http.get(ROUTE).set(bearer(key)).expect(200);
    expect(t.app.get(CredentialCache).active).toBe(false);
    await revokeUnannounced(t, credential.id);
    await t.http.get(ROUTE).set(bearer(key)).expect(401);
  });
});
