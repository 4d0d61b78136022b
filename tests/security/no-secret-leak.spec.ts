import type { Response } from 'supertest';

import { raiseNotice, type Received, readmeRecipe, runWorker, startReceiver, TEST_WEBHOOK_KEY } from '../delivery/delivery-support';
import { bearer, seedCast, seedPersonWithPassword } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

/*
 * Every kind of secret the service makes or receives (passwords at sign-in,
 * sign-up and password change, session tokens, service credential keys,
 * webhook signing secrets, calendar-feed tokens) is made and used, a signed
 * webhook delivery included, with the most verbose logging. Afterwards no
 * secret may appear in any log line the service wrote, in any later response
 * (lists, reads, the audit trail, every export in every format), nor in clear
 * in any table.
 */

const ADMIN_PASSWORD = 'settled sludge volume after thirty minutes';
const WRONG_PASSWORD = 'turbidity below one NTU at the outlet';
const CHOSEN_PASSWORD = 'free chlorine between point two and point five';
const REPORTS = ['inventory-register', 'calibration-log', 'factor-register', 'balance-check-log', 'audit-trail', 'overdue-summary'];
const FORMATS = ['csv', 'ndjson', 'pdf'];

describe('secrets in logs and responses', () => {
  let t: TestApp;
  /** Each secret with the moment it was created: the index of the first response after its creation. */
  const secrets: { name: string; value: string; createdAt: number }[] = [];
  const responses: { what: string; text: string }[] = [];

  let receiver: Awaited<ReturnType<typeof startReceiver>>;

  beforeAll(async () => {
    t = await startTestApp({ LOG_LEVEL: 'trace', WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY });
    receiver = await startReceiver([200]);
  }, 60_000);
  afterAll(async () => {
    await receiver.close();
    await t.close();
  });

  /** Sends and keeps the answer's text (a PDF's bytes as latin1, so any ASCII secret inside would show). */
  async function call(what: string, send: Promise<Response>, expected: number): Promise<Response> {
    const res = await send;
    if (res.status !== expected) throw new Error(`${what}: ${res.status} ${res.text}`);
    const text = res.text ?? (Buffer.isBuffer(res.body) ? res.body.toString('latin1') : JSON.stringify(res.body));
    responses.push({ what, text });
    return res;
  }
  /** A secret counts from the response after the one that created it. */
  const secret = (name: string, value: unknown) => {
    if (typeof value !== 'string' || value.length < 16) throw new Error(`${name}: not a secret string: ${String(value)}`);
    secrets.push({ name, value, createdAt: responses.length });
  };

  it('writes no secret to its logs, its later answers or its tables', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const lab = cast.lab.id;
    const admin = await seedPersonWithPassword(prisma, ADMIN_PASSWORD, { registryRole: 'administrator' });
    secret('administrator password', ADMIN_PASSWORD);
    secret('wrong password', WRONG_PASSWORD);
    secret('chosen password', CHOSEN_PASSWORD);
    const http = t.http;

    // Passwords in and tokens out.
    await call('wrong sign-in', http.post('/v1/sessions').send({ email: admin.email, password: WRONG_PASSWORD }), 401);
    const adminToken = (await call('sign-in', http.post('/v1/sessions').send({ email: admin.email, password: ADMIN_PASSWORD }), 201)).body
      .token as string;
    secret('administrator session', adminToken);
    const auth = bearer(adminToken);
    const person = await call(
      'register a person',
      http.post('/v1/people').set(auth).send({ email: 'ines.keller@waterworks.example', displayName: 'Ines Keller' }),
      201,
    );
    secret('one-time password', person.body.initialPassword);
    await call('add to lab', http.put(`/v1/labs/${lab}/members/${person.body.id}`).set(auth).send({ role: 'manager' }), 200);
    const first = (
      await call(
        'sign-in with the one-time password',
        http.post('/v1/sessions').send({ email: 'ines.keller@waterworks.example', password: person.body.initialPassword }),
        201,
      )
    ).body.token as string;
    secret('first session', first);
    await call(
      'change password',
      http.post('/v1/me/password').set(bearer(first)).send({ currentPassword: person.body.initialPassword, newPassword: CHOSEN_PASSWORD }),
      204,
    );
    const managerToken = (
      await call(
        'sign-in with the chosen password',
        http.post('/v1/sessions').send({ email: 'ines.keller@waterworks.example', password: CHOSEN_PASSWORD }),
        201,
      )
    ).body.token as string;
    secret('manager session', managerToken);

    // Service credentials: issued, used, rotated.
    const credential = await call(
      'issue a credential',
      http
        .post('/v1/service-credentials')
        .set(auth)
        .send({ name: 'Sample-management system', scopes: ['inventory:read'], labIds: 'all' }),
      201,
    );
    secret('credential key', credential.body.key);
    secret('credential secret part', String(credential.body.key).split('.')[1]);
    await call('use the key', http.get('/v1/vessels').set(bearer(credential.body.key)), 200);
    const rotated = await call('rotate the key', http.post(`/v1/service-credentials/${credential.body.id}/rotate`).set(auth), 201);
    secret('rotated credential key', rotated.body.key);
    await call('use the new key', http.get('/v1/labs').set(bearer(rotated.body.key)), 200);

    // Webhook secrets and calendar-feed tokens.
    const webhook = await call(
      'register a webhook',
      http
        .post(`/v1/labs/${lab}/webhooks`)
        .set(bearer(managerToken))
        .send({ url: receiver.url, eventKinds: ['due-soon', 'overdue'] }),
      201,
    );
    secret('webhook secret', webhook.body.secret);
    const rotatedHook = await call(
      'rotate its secret',
      http.post(`/v1/labs/${lab}/webhooks/${webhook.body.id}/rotate-secret`).set(bearer(managerToken)),
      200,
    );
    secret('rotated webhook secret', rotatedHook.body.secret);
    // A notice delivered to the webhook: signed with the secret, which itself travels nowhere.
    await raiseNotice(t, { labId: lab, recipientIds: [person.body.id] });
    await runWorker(t);
    expect(receiver.received).toHaveLength(1);
    const [delivered] = receiver.received as [Received];
    expect(readmeRecipe()(rotatedHook.body.secret, delivered.headers, delivered.body)).toBe(true);
    responses.push({ what: 'the webhook delivery', text: JSON.stringify(delivered) });
    const feed = await call(
      'create a feed',
      http.post(`/v1/labs/${lab}/calendar-feeds`).set(bearer(managerToken)).send({ name: 'DW-CHEM due dates' }),
      201,
    );
    secret('feed token', feed.body.token);
    await call('subscribe to the feed', http.get('/v1/calendar-feed.ics').query({ token: feed.body.token }), 200);
    await call('sign out', http.delete('/v1/sessions/current').set(bearer(managerToken)), 204);

    // Everything a reader can see afterwards.
    const reads = [
      '/v1/me',
      '/v1/people',
      `/v1/people/${person.body.id}`,
      '/v1/service-credentials',
      `/v1/service-credentials/${credential.body.id}`,
      `/v1/service-credentials/${rotated.body.id}`,
      `/v1/labs/${lab}/webhooks`,
      `/v1/labs/${lab}/webhooks/${webhook.body.id}`,
      `/v1/labs/${lab}/calendar-feeds`,
      `/v1/labs/${lab}/deliveries`,
      '/v1/audit-trail?limit=200',
      '/v1/audit-trail/verification',
      '/v1/exports',
    ];
    for (const path of reads) await call(`read ${path}`, http.get(path).set(auth), 200);
    for (const report of REPORTS) {
      for (const format of FORMATS) {
        await call(
          `export ${report} as ${format}`,
          http
            .post('/v1/exports')
            .set(auth)
            .send({ report, format, from: '2020-01-01T00:00:00Z', to: '2030-01-01T00:00:00Z' })
            .buffer(true)
            .parse((res, done) => {
              const chunks: Buffer[] = [];
              res.on('data', (c: Buffer) => chunks.push(c));
              res.on('end', () => done(null, Buffer.concat(chunks)));
            }),
          200,
        );
      }
    }

    // Everything stored, each table's rows as text.
    const tables = await prisma.$queryRaw<{ name: string }[]>`
      SELECT table_name AS name FROM information_schema.tables WHERE table_schema = 'public' AND table_type = 'BASE TABLE'`;
    const stored: { what: string; text: string }[] = [];
    for (const { name } of tables) {
      const rows = await prisma.$queryRawUnsafe<{ t: string | null }[]>(`SELECT string_agg(x::text, E'\\n') AS t FROM ${name} x`);
      stored.push({ what: `table ${name}`, text: rows[0]?.t ?? '' });
    }
    const logText = t.logs.map((l) => JSON.stringify(l)).join('\n');

    expect(t.logs.length).toBeGreaterThan(50);
    expect(logText).toContain('"level":20'); // debug lines were written and are scanned too
    const leaks: string[] = [];
    for (const s of secrets) {
      if (logText.includes(s.value)) leaks.push(`${s.name} in the logs: ${logLineWith(t, s.value)}`);
      for (const r of responses.slice(s.createdAt + 1)) if (r.text.includes(s.value)) leaks.push(`${s.name} in the answer to ${r.what}`);
      for (const r of stored) if (r.text.includes(s.value)) leaks.push(`${s.name} in ${r.what}`);
    }
    expect(leaks).toEqual([]);
    // The checks can see a secret where it belongs: in the answer that created it.
    expect(responses.find((r) => r.what === 'issue a credential')?.text).toContain(credential.body.key);
    expect(responses.length).toBeGreaterThan(30);
  }, 120_000);
});

function logLineWith(t: TestApp, value: string): string {
  return JSON.stringify(t.logs.find((l) => JSON.stringify(l).includes(value))).slice(0, 300);
}
