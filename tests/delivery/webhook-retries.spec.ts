import { ManualClock } from '../../apps/api/src/common/clock';
import { bearer, seedCast } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { deliveriesOf, raiseNotice, readmeRecipe, runWorker, startReceiver, TEST_WEBHOOK_KEY } from './delivery-support';

/*
 * A webhook receiver that fails twice, then recovers: the notice arrives
 * exactly once with a valid signature (checked with the README's recipe), and
 * the retries keep to the backoff schedule as the clock moves.
 */

const BASE_MS = 60_000;
/** Near the real time: the cast's sessions were opened now, and age with the clock. */
const START = new Date(Math.floor(Date.now() / 1000) * 1000);

describe('webhook delivery with retries', () => {
  let t: TestApp;
  /** Each scenario in labs of its own, so webhooks registered by one do not receive another's notices. */
  let cast: Awaited<ReturnType<typeof seedCast>>;
  const clock = new ManualClock(START);

  beforeAll(async () => {
    t = await startTestApp(
      {
        WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY,
        DELIVERY_RETRY_BASE_MS: String(BASE_MS),
        DELIVERY_MAX_ATTEMPTS: '4',
        DELIVERY_TIMEOUT_MS: '2000',
      },
      { clock },
    );
  }, 60_000);
  beforeEach(async () => {
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  async function register(url: string, eventKinds = ['due-soon', 'overdue'], labId = cast.lab.id, token = cast.tokens.manager) {
    const res = await t.http
      .post(`/v1/labs/${labId}/webhooks`)
      .set(bearer(token))
      .send({ url, description: 'Sample-management system', eventKinds });
    expect(res.status).toBe(201);
    return res.body as { id: string; secret: string };
  }

  it('fails twice, then delivers once with a signature the README recipe accepts', async () => {
    clock.set(START);
    const receiver = await startReceiver([500, 503, 204]);
    try {
      const hook = await register(receiver.url);
      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], subjectLabel: 'PIP-25-014' });
      const [row] = await deliveriesOf(t.database.prisma, notice.id);
      expect(row).toMatchObject({ channel: 'webhook', webhookId: hook.id, state: 'pending', attempts: 0, target: receiver.url });

      // Attempt 1 at START: 500.
      expect(await runWorker(t)).toMatchObject({ claimed: 1, retrying: 1 });
      let log = await logOf(notice.id);
      expect(log).toMatchObject({ state: 'pending', attempts: 1, lastStatusCode: 500, lastError: 'the endpoint answered 500' });
      const first = Date.parse(log.nextAttemptAt) - START.getTime();
      expect(first).toBeGreaterThanOrEqual(0.8 * BASE_MS);
      expect(first).toBeLessThanOrEqual(BASE_MS);

      // Not before it is due.
      clock.set(new Date(Date.parse(log.nextAttemptAt) - 1));
      expect(await runWorker(t)).toMatchObject({ claimed: 0 });
      expect(receiver.received).toHaveLength(1);

      // Attempt 2 when due: 503; the next delay doubles.
      const second = new Date(log.nextAttemptAt);
      clock.set(second);
      expect(await runWorker(t)).toMatchObject({ claimed: 1, retrying: 1 });
      log = await logOf(notice.id);
      expect(log).toMatchObject({ state: 'pending', attempts: 2, lastStatusCode: 503 });
      const delay = Date.parse(log.nextAttemptAt) - second.getTime();
      expect(delay).toBeGreaterThanOrEqual(0.8 * 2 * BASE_MS);
      expect(delay).toBeLessThanOrEqual(2 * BASE_MS);

      clock.set(new Date(Date.parse(log.nextAttemptAt) - 1));
      expect(await runWorker(t)).toMatchObject({ claimed: 0 });

      // Attempt 3: accepted.
      const third = new Date(log.nextAttemptAt);
      clock.set(third);
      expect(await runWorker(t)).toMatchObject({ claimed: 1, delivered: 1 });
      log = await logOf(notice.id);
      expect(log).toMatchObject({ state: 'delivered', attempts: 3, lastStatusCode: 204, lastError: null, nextAttemptAt: null });
      expect(log.deliveredAt).toBe(clock.now().toISOString());

      // Much later, nothing more is sent.
      clock.advance(30 * 86_400_000);
      expect(await runWorker(t)).toMatchObject({ claimed: 0 });
      expect(receiver.received.map((r) => r.answered)).toEqual([500, 503, 204]);

      const verify = readmeRecipe();
      const accepted = receiver.received.filter((r) => r.answered < 300);
      expect(accepted).toHaveLength(1);
      const got = accepted[0]!;
      expect(verify(hook.secret, got.headers, got.body, Math.floor(third.getTime() / 1000))).toBe(true);
      expect(got.headers['registry-delivery']).toBe(log.id);
      expect(got.headers['registry-event']).toBe('due-soon');
      expect(JSON.parse(got.body)).toMatchObject({
        deliveryId: log.id,
        event: 'due-soon',
        notice: { id: notice.id, labId: cast.lab.id, subjectLabel: 'PIP-25-014', dueOn: '2026-12-15', eventKind: 'due-soon' },
      });
      // Every attempt carried the same delivery id, and a valid signature of its own body.
      for (const r of receiver.received) {
        expect(r.headers['registry-delivery']).toBe(log.id);
        expect(verify(hook.secret, r.headers, r.body, Number(r.headers['registry-timestamp']))).toBe(true);
      }
      // The recipe refuses a changed body, another secret and an old timestamp.
      expect(
        verify(hook.secret, got.headers, got.body.replace('PIP-25-014', 'PIP-25-015'), Number(got.headers['registry-timestamp'])),
      ).toBe(false);
      expect(verify(`${hook.secret}x`, got.headers, got.body, Number(got.headers['registry-timestamp']))).toBe(false);
      expect(verify(hook.secret, got.headers, got.body, Number(got.headers['registry-timestamp']) + 301)).toBe(false);
    } finally {
      await receiver.close();
    }
  });

  it('delivers only to enabled webhooks of the notice’s lab subscribed to its event kind', async () => {
    clock.set(START);
    const receiver = await startReceiver([200]);
    try {
      const overdueOnly = await register(receiver.url, ['overdue']);
      const both = await register(receiver.url, ['due-soon', 'overdue']);
      const disabled = await register(receiver.url, ['due-soon']);
      const otherLab = await register(receiver.url, ['due-soon'], cast.otherLab.id, cast.tokens.admin);
      const off = await t.http
        .patch(`/v1/labs/${cast.lab.id}/webhooks/${disabled.id}`)
        .set(bearer(cast.tokens.manager))
        .set('if-match', '"v1"')
        .send({ enabled: false });
      expect(off.status).toBe(200);

      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], eventKind: 'due-soon' });
      const rows = await deliveriesOf(t.database.prisma, notice.id);
      const hooks = rows.map((r) => r.webhookId);
      expect(hooks).toContain(both.id);
      expect(hooks).not.toContain(overdueOnly.id);
      expect(hooks).not.toContain(disabled.id);
      expect(hooks).not.toContain(otherLab.id);
      // No SMTP configured here: no e-mail rows.
      expect(rows.every((r) => r.channel === 'webhook')).toBe(true);
    } finally {
      await receiver.close();
    }
  });

  it('gives up after the last attempt, and a manager’s redelivery sends it again (audited)', async () => {
    clock.set(START);
    const receiver = await startReceiver([500, 500, 500, 500, 200]);
    try {
      const hook = await register(receiver.url);
      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id], eventKind: 'overdue' });
      for (let i = 0; i < 4; i++) {
        const log = await logOf(notice.id);
        clock.set(new Date(log.nextAttemptAt));
        await runWorker(t);
        expect(receiver.received).toHaveLength(i + 1);
      }
      const failed = await logOf(notice.id);
      expect(failed).toMatchObject({ state: 'failed', attempts: 4, attemptLimit: 4, nextAttemptAt: null, lastStatusCode: 500 });
      expect(failed.failedAt).toBe(clock.now().toISOString());
      clock.advance(10 * 60_000);
      await runWorker(t);
      expect(receiver.received).toHaveLength(4);

      const path = `/v1/labs/${cast.lab.id}/deliveries/${failed.id}/redeliver`;
      expect((await t.http.post(path).set(bearer(cast.tokens.analyst))).status).toBe(403);
      expect((await t.http.post(path).set(bearer(cast.tokens.auditor))).status).toBe(403);
      expect(
        (await t.http.post(`/v1/labs/${cast.otherLab.id}/deliveries/${failed.id}/redeliver`).set(bearer(cast.tokens.admin))).status,
      ).toBe(404);
      const res = await t.http.post(path).set(bearer(cast.tokens.manager));
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ state: 'pending', attempts: 4, attemptLimit: 8, redeliveries: 1, failedAt: null });
      expect(res.body.nextAttemptAt).toBe(clock.now().toISOString());
      const again = await t.http.post(path).set(bearer(cast.tokens.manager));
      expect(again.status).toBe(409);
      expect(again.body).toMatchObject({ code: 'invalid-state', state: 'pending' });

      await runWorker(t);
      expect(await logOf(notice.id)).toMatchObject({ state: 'delivered', attempts: 5, lastStatusCode: 200 });
      expect(receiver.received.map((r) => r.headers['registry-delivery'])).toEqual(Array(5).fill(failed.id));
      expect(
        readmeRecipe()(hook.secret, receiver.received[4]!.headers, receiver.received[4]!.body, Math.floor(clock.now().getTime() / 1000)),
      ).toBe(true);

      const audit = await t.database.prisma.auditEntry.findMany({ where: { entityType: 'notice-delivery', entityId: failed.id } });
      expect(audit).toHaveLength(1);
      expect(audit[0]).toMatchObject({ action: 'redeliver', actorId: cast.people.manager.id, labId: cast.lab.id });
      expect((await t.http.post(path).set(bearer(cast.tokens.manager))).status).toBe(409);
    } finally {
      await receiver.close();
    }
  });

  it('fails a pending delivery at its next attempt when its webhook was disabled meanwhile', async () => {
    clock.set(START);
    const receiver = await startReceiver([200]);
    try {
      const hook = await register(receiver.url);
      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id] });
      const off = await t.http
        .patch(`/v1/labs/${cast.lab.id}/webhooks/${hook.id}`)
        .set(bearer(cast.tokens.manager))
        .set('if-match', '"v1"')
        .send({ enabled: false });
      expect(off.status).toBe(200);
      await runWorker(t);
      expect(receiver.received).toHaveLength(0);
      expect(await logOf(notice.id)).toMatchObject({ state: 'failed', attempts: 1, lastError: 'the webhook is disabled' });
    } finally {
      await receiver.close();
    }
  });

  it('counts an endpoint that does not answer within the timeout as a failed attempt', async () => {
    clock.set(START);
    const receiver = await startReceiver([200], { hangMs: 4_000 });
    try {
      await register(receiver.url);
      const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id] });
      const started = Date.now();
      await runWorker(t);
      expect(Date.now() - started).toBeLessThan(3_500);
      expect(await logOf(notice.id)).toMatchObject({
        state: 'pending',
        attempts: 1,
        lastStatusCode: null,
        lastError: 'no answer within 2000 ms',
      });
    } finally {
      await receiver.close();
    }
  });

  it('lists the delivery log with filters, for the lab’s managers, administrators and auditors only', async () => {
    clock.set(START);
    const receiver = await startReceiver([200, 500]);
    try {
      await register(receiver.url);
      await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id] });
      await raiseNotice(t, { labId: cast.lab.id, recipientIds: [cast.people.manager.id] });
      await runWorker(t);
    } finally {
      await receiver.close();
    }
    const all = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).set(bearer(cast.tokens.auditor));
    expect(all.status).toBe(200);
    expect(all.body.items).toHaveLength(2);
    const delivered = await t.http
      .get(`/v1/labs/${cast.lab.id}/deliveries`)
      .query({ state: 'delivered', channel: 'webhook' })
      .set(bearer(cast.tokens.manager));
    expect(delivered.body.items).toHaveLength(1);
    expect(delivered.body.items[0]).toMatchObject({ state: 'delivered', lastStatusCode: 200 });
    const pending = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).query({ state: 'pending' }).set(bearer(cast.tokens.manager));
    expect(pending.body.items).toHaveLength(1);
    expect(pending.body.items[0]).toMatchObject({ lastStatusCode: 500, attempts: 1 });
    const email = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).query({ channel: 'email' }).set(bearer(cast.tokens.manager));
    expect(email.body.items).toHaveLength(0);
    const page = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).query({ limit: '1' }).set(bearer(cast.tokens.admin));
    expect(page.body.items).toHaveLength(1);
    const next = await t.http
      .get(`/v1/labs/${cast.lab.id}/deliveries`)
      .query({ limit: '1', cursor: page.body.nextCursor })
      .set(bearer(cast.tokens.admin));
    expect(next.body.items).toHaveLength(1);
    expect(next.body.items[0].id).not.toBe(page.body.items[0].id);
    expect(next.body.nextCursor).toBeNull();
    expect((await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).set(bearer(cast.tokens.analyst))).status).toBe(403);
    expect((await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).set(bearer(cast.tokens.otherManager))).status).toBe(404);
    const bad = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).query({ state: 'lost' }).set(bearer(cast.tokens.admin));
    expect(bad.status).toBe(400);
    expect(bad.body.errors[0].field).toBe('state');
  });

  async function logOf(noticeId: string) {
    const res = await t.http
      .get(`/v1/labs/${cast.lab.id}/deliveries`)
      .query({ noticeId, channel: 'webhook' })
      .set(bearer(cast.tokens.auditor));
    expect(res.status).toBe(200);
    expect(res.body.items).toHaveLength(1);
    return res.body.items[0] as Record<string, string> & { id: string; nextAttemptAt: string };
  }
});
