import request from 'supertest';

import { ManualClock } from '../../apps/api/src/common/clock';
import { DeliveryWorker } from '../../apps/api/src/deliveries/delivery-worker';
import { anotherInstance, type Instance } from '../scheduling/support';
import { bearer, seedCast } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { deliveriesOf, raiseNotice, runWorker, startReceiver, TEST_WEBHOOK_KEY } from './delivery-support';

/*
 * By default (WEBHOOK_PRIVATE_TARGETS=refuse) a webhook reaches neither this host nor a
 * private, link-local or reserved network: such a URL is refused when registered or
 * changed, and a delivery to such an address (a literal, or a name resolving to one)
 * fails without connecting. A deployment on a closed lab network may allow them.
 */

const START = new Date(Math.floor(Date.now() / 1000) * 1000);
const REFUSED = /\(WEBHOOK_PRIVATE_TARGETS=allow permits it\)$/;

describe('webhook targets', () => {
  let t: TestApp;
  let allowing: Instance;
  let cast: Awaited<ReturnType<typeof seedCast>>;
  const clock = new ManualClock(START);

  beforeAll(async () => {
    t = await startTestApp(
      { WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY, WEBHOOK_PRIVATE_TARGETS: 'refuse', DELIVERY_TIMEOUT_MS: '2000' },
      { clock },
    );
    allowing = await anotherInstance(t, clock, { WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY, WEBHOOK_PRIVATE_TARGETS: 'allow' });
    await allowing.app.getHttpAdapter().getInstance().ready();
    cast = await seedCast(t.database.prisma);
  }, 60_000);
  afterAll(async () => {
    await allowing.close();
    await t.close();
  });

  const register = (url: string, http = t.http) =>
    http
      .post(`/v1/labs/${cast.lab.id}/webhooks`)
      .set(bearer(cast.tokens.manager))
      .send({ url, description: 'Sample-management system', eventKinds: ['due-soon'] });
  const count = (table: 'webhook' | 'auditEntry') =>
    table === 'webhook' ? t.database.prisma.webhook.count() : t.database.prisma.auditEntry.count();

  it.each([
    ['loopback', 'http://127.0.0.1:8080/hooks'],
    ['loopback written in hexadecimal (the URL parser reads 127.0.0.1)', 'http://0x7f.1/hooks'],
    ['IPv6 loopback', 'http://[::1]:8080/hooks'],
    ['IPv4-mapped IPv6 loopback', 'http://[::ffff:127.0.0.1]/hooks'],
    ['the cloud metadata address', 'http://169.254.169.254/latest/meta-data'],
    ['a private network', 'https://10.20.30.40/hooks'],
    ['a unique local IPv6 network', 'https://[fd12:3456::1]/hooks'],
    ['localhost', 'http://localhost:3000/hooks'],
    ['a subdomain of localhost', 'http://bridge.localhost/hooks'],
  ])('refuses %s on registration and writes nothing', async (_what, url) => {
    const [hooks, audit] = [await count('webhook'), await count('auditEntry')];
    const res = await register(url).expect(400);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(res.body.errors).toEqual([{ field: 'url', reason: expect.stringMatching(REFUSED) }]);
    expect([await count('webhook'), await count('auditEntry')]).toEqual([hooks, audit]);
  });

  it('takes a public address or any name on registration, and refuses a change to a private one', async () => {
    await register('http://1.1.1.1/hooks').expect(201);
    const named = await register('https://hooks.waterworks.example/registry').expect(201);
    const res = await t.http
      .patch(`/v1/labs/${cast.lab.id}/webhooks/${named.body.id}`)
      .set(bearer(cast.tokens.manager))
      .set('if-match', '"v1"')
      .send({ url: 'http://192.168.1.20/hooks' })
      .expect(400);
    expect(res.body.errors).toEqual([{ field: 'url', reason: expect.stringMatching(REFUSED) }]);
    expect(await t.database.prisma.webhook.findUniqueOrThrow({ where: { id: named.body.id } })).toMatchObject({
      url: 'https://hooks.waterworks.example/registry',
      version: 1,
    });
    await t.database.prisma.webhook.deleteMany({ where: { labId: cast.lab.id } });
  });

  it('does not deliver to a private address, by literal or by a name resolving to one; a deployment that allows them does', async () => {
    const receiver = await startReceiver([204]);
    try {
      const port = new URL(receiver.url).port;
      // Registered where private targets are allowed (or before the setting changed).
      const literal = await register(receiver.url, request(allowing.app.getHttpServer())).expect(201);
      const named = await register(`http://localhost:${port}/hooks/registry`, request(allowing.app.getHttpServer())).expect(201);
      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [] });

      expect(await runWorker(t)).toMatchObject({ claimed: 2, retrying: 2 });
      const refused = await deliveriesOf(t.database.prisma, notice.id);
      const errorOf = (webhookId: string) => refused.find((d) => d.webhookId === webhookId)?.lastError;
      expect(errorOf(literal.body.id)).toBe(
        'refused: 127.0.0.1 is a loopback, private or reserved address (WEBHOOK_PRIVATE_TARGETS=allow permits it)',
      );
      expect(errorOf(named.body.id)).toMatch(/^refused: localhost resolves to (127\.0\.0\.1|::1), a loopback, private or reserved address/);
      expect(receiver.received).toHaveLength(0);

      // The retry, made by an instance that allows private targets, reaches the receiver.
      await t.database.prisma.webhook.update({ where: { id: named.body.id }, data: { enabled: false } });
      clock.advance(24 * 3_600_000);
      await allowing.app.get(DeliveryWorker).runOnce();
      expect(receiver.received).toHaveLength(1);
      expect(receiver.received[0]?.headers['content-type']).toBe('application/json');
      const after = await deliveriesOf(t.database.prisma, notice.id);
      expect(after.find((d) => d.webhookId === literal.body.id)).toMatchObject({ state: 'delivered', attempts: 2 });
    } finally {
      await receiver.close();
    }
  });
});
