import { Writable } from 'node:stream';

import { createDatabase } from '@registry/data';

import { createApp } from '../../apps/api/src/app.factory';
import { ManualClock } from '../../apps/api/src/common/clock';
import { parseConfig } from '../../apps/api/src/config/config.schema';
import { DeliveryWorker } from '../../apps/api/src/deliveries/delivery-worker';
import { createLogger } from '../../apps/api/src/logging';
import { DueScheduler } from '../../apps/api/src/scheduler/due-scheduler';
import { bearer, seedCast, seedCheckWeight, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { raiseNotice, readmeRecipe, startReceiver, TEST_WEBHOOK_KEY } from './delivery-support';

/*
 * The whole path: the scheduler raises a notice, its transaction writes the
 * deliveries, and workers in two instances of the service send each one once.
 */

const START = new Date('2026-12-01T07:00:00Z');
const ENV = { WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY, DELIVERY_TIMEOUT_MS: '3000' };

describe('from the scheduler to the webhook', () => {
  let t: TestApp;
  const clock = new ManualClock(START);

  beforeAll(async () => {
    t = await startTestApp(ENV, { clock });
  }, 60_000);
  afterAll(() => t.close());

  /** Another instance of the service on the same database (its own pool), as another process would run. */
  async function secondInstance(env: Record<string, string> = {}) {
    const config = parseConfig({
      NODE_ENV: 'test',
      LOG_LEVEL: 'warn',
      WEBHOOK_PRIVATE_TARGETS: 'allow',
      DATABASE_URL: t.testDatabase.appUrl,
      ...ENV,
      ...env,
    });
    const database = createDatabase({ databaseUrl: t.testDatabase.appUrl, poolMax: 5 });
    const sink = new Writable({ write: (_c, _e, done) => done() });
    const app = await createApp({ config, database, logger: createLogger(config, sink), clock });
    await app.init();
    return {
      worker: app.get(DeliveryWorker),
      async close() {
        await app.close();
        await database.close();
      },
    };
  }

  it('delivers the notice a scheduler pass raises, in the same transaction as the notice', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const receiver = await startReceiver([200]);
    try {
      const token = await sessionFor(prisma, cast.people.manager.id, clock.now());
      const hook = await t.http
        .post(`/v1/labs/${cast.lab.id}/webhooks`)
        .set(bearer(token))
        .send({ url: receiver.url, eventKinds: ['due-soon'] });
      expect(hook.status).toBe(201);
      const weight = await seedCheckWeight(prisma, cast.lab.id, {
        assetTag: 'CW-E2-100G-01',
        certificateDue: new Date('2026-12-20T00:00:00Z'),
      });

      await t.app.get(DueScheduler).runPass();
      const notice = await prisma.notice.findFirstOrThrow({ where: { subjectId: weight.id } });
      const rows = await prisma.noticeDelivery.findMany({ where: { noticeId: notice.id } });
      expect(rows).toHaveLength(1);
      expect(rows[0]).toMatchObject({ webhookId: hook.body.id, state: 'pending', createdAt: clock.now() });
      // A second pass raises nothing new, so nothing more to deliver.
      await t.app.get(DueScheduler).runPass();
      expect(await prisma.noticeDelivery.count({ where: { labId: cast.lab.id } })).toBe(1);

      await t.app.get(DeliveryWorker).runOnce();
      expect(receiver.received).toHaveLength(1);
      const got = receiver.received[0]!;
      expect(readmeRecipe()(hook.body.secret, got.headers, got.body, Math.floor(clock.now().getTime() / 1000))).toBe(true);
      expect(JSON.parse(got.body).notice).toMatchObject({
        id: notice.id,
        subjectKind: 'reference-weight',
        subjectLabel: 'CW-E2-100G-01',
        dueOn: '2026-12-20',
        eventKind: 'due-soon',
      });
    } finally {
      await receiver.close();
    }
  });

  it('sends each delivery once when two instances’ workers pass at the same moment', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const receiver = await startReceiver([200]);
    const other = await secondInstance();
    try {
      const token = await sessionFor(prisma, cast.people.admin.id, clock.now());
      for (let i = 0; i < 3; i++) {
        const res = await t.http
          .post(`/v1/labs/${cast.lab.id}/webhooks`)
          .set(bearer(token))
          .send({ url: `${receiver.url}?hook=${i}`, eventKinds: ['due-soon', 'overdue'] });
        expect(res.status).toBe(201);
      }
      for (let i = 0; i < 10; i++)
        await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], raisedAt: clock.now() });
      const expected = await prisma.noticeDelivery.count({ where: { labId: cast.lab.id } });
      expect(expected).toBe(30);

      const mine = t.app.get(DeliveryWorker);
      const passes = await Promise.all([mine.runOnce(), other.worker.runOnce(), mine.runOnce(), other.worker.runOnce()]);
      // 30 deliveries, batches of 25: every pass claimed something or nothing, never the same row twice.
      expect(passes.reduce((sum, p) => sum + p.claimed, 0)).toBe(30);
      await Promise.all([mine.runOnce(), other.worker.runOnce()]);

      const ids = receiver.received.map((r) => r.headers['registry-delivery']);
      expect(ids).toHaveLength(30);
      expect(new Set(ids).size).toBe(30);
      expect(await prisma.noticeDelivery.count({ where: { labId: cast.lab.id, state: 'delivered', attempts: 1 } })).toBe(30);
    } finally {
      await other.close();
      await receiver.close();
    }
  });

  it('sends by itself when the worker loop is on (DELIVERY_WORKER_PERIOD_MS), and stops with the app', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const receiver = await startReceiver([200]);
    const looping = await secondInstance({ DELIVERY_WORKER_PERIOD_MS: '50' });
    try {
      const token = await sessionFor(prisma, cast.people.manager.id, clock.now());
      const res = await t.http
        .post(`/v1/labs/${cast.lab.id}/webhooks`)
        .set(bearer(token))
        .send({ url: receiver.url, eventKinds: ['overdue'] });
      expect(res.status).toBe(201);
      await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], eventKind: 'overdue' });
      const until = Date.now() + 5_000;
      while (receiver.received.length === 0 && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
      expect(receiver.received).toHaveLength(1);
    } finally {
      await looping.close();
      await receiver.close();
    }
    // Closed: a new notice stays pending (this file's own app has no loop).
    const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], eventKind: 'overdue' });
    await new Promise((r) => setTimeout(r, 300));
    expect(await prisma.noticeDelivery.findFirstOrThrow({ where: { noticeId: notice.id } })).toMatchObject({
      state: 'pending',
      attempts: 0,
    });
  });
});
