import { CURRENT_HASH_PREFIX } from '../../apps/api/src/sessions/password-hashing';
import { ManualClock } from '../../apps/api/src/common/clock';
import { auditAndLogText, bearer, seedPerson, seedPersonWithPassword } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const PASSWORD = 'sodium hypochlorite dosing pump';

describe('signing in and out', () => {
  const clock = new ManualClock(new Date('2026-03-02T08:00:00Z'));
  let t: TestApp;
  let address = 0;
  /** Each test its own client address (X-Forwarded-For is trusted here), so address limits stay apart. */
  const from = () => `192.0.2.${++address}`;
  const signIn = (email: string, password: string, ip: string) =>
    t.http.post('/v1/sessions').set('x-forwarded-for', ip).set('user-agent', 'titrator-bridge/2.1').send({ email, password });

  beforeAll(async () => {
    t = await startTestApp(
      { SIGN_IN_MAX_FAILURES: '3', SIGN_IN_WINDOW_MINUTES: '10', SESSION_ABSOLUTE_HOURS: '12', TRUST_PROXY: 'true' },
      { clock },
    );
  });
  afterAll(() => t.close());

  it('opens a session with the right password: the token works and expires after the absolute timeout', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD, { displayName: 'Ines Kovač' });
    const ip = from();
    const res = await signIn(person.email.toUpperCase(), PASSWORD, ip).expect(201);
    expect(res.body).toEqual({
      token: expect.stringMatching(/^rs_[A-Za-z0-9_-]{43}$/),
      expiresAt: '2026-03-02T20:00:00.000Z',
      person: { id: person.id, email: person.email, displayName: 'Ines Kovač', registryRole: null, mustChangePassword: false },
    });
    await t.http.get('/v1/me').set(bearer(res.body.token)).expect(200);
    const session = await t.database.prisma.session.findFirstOrThrow({ where: { personId: person.id } });
    expect(session).toMatchObject({ clientAddress: ip, userAgent: 'titrator-bridge/2.1', revokedAt: null });
  });

  it('answers a wrong password, an unknown email, a disabled person and a person without password alike', async () => {
    const active = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const disabled = await seedPersonWithPassword(t.database.prisma, PASSWORD, { status: 'disabled' });
    const noPassword = await seedPerson(t.database.prisma);
    const answers = [
      await signIn(active.email, 'sodium hypochlorite dosing pumps', from()),
      await signIn('nobody@waterworks.example', PASSWORD, from()),
      await signIn(disabled.email, PASSWORD, from()),
      await signIn(noPassword.email, PASSWORD, from()),
    ];
    const shapes = answers.map((r) => ({ status: r.status, body: { ...r.body, requestId: undefined } }));
    expect(shapes[0]).toMatchObject({ status: 401, body: { code: 'unauthenticated' } });
    for (const shape of shapes) expect(shape).toEqual(shapes[0]);
  });

  it('stores argon2id hashes with m = 19456 KiB, t = 2, p = 1', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const { passwordHash } = await t.database.prisma.person.findUniqueOrThrow({ where: { id: person.id } });
    expect(CURRENT_HASH_PREFIX).toBe('$argon2id$v=19$m=19456,t=2,p=1$');
    expect(passwordHash?.startsWith('$argon2id$v=19$m=19456,t=2,p=1$')).toBe(true);
  });

  it('throttles an email after 3 failures with 429 and Retry-After, and lets the person in once the window has passed', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const start = clock.now().getTime();
    for (let i = 0; i < 3; i++) {
      await signIn(person.email, `wrong guess number ${i}`, from()).expect(401);
      clock.advance(60_000);
    }
    const refused = await signIn(person.email, PASSWORD, from()).expect(429);
    expect(refused.body.code).toBe('too-many-requests');
    // The oldest failure leaves the 10-minute window 7 minutes from now.
    expect(refused.headers['retry-after']).toBe('420');
    clock.set(new Date(start + 10 * 60_000 + 1000));
    await signIn(person.email, PASSWORD, from()).expect(201);
    // Success forgets the failures.
    await signIn(person.email, 'one more wrong guess', from()).expect(401);
    await signIn(person.email, PASSWORD, from()).expect(201);
  });

  it('throttles one client address trying many emails at four times the per-email limit', async () => {
    const ip = from();
    for (let i = 0; i < 12; i++) await signIn(`guess-${i}@waterworks.example`, PASSWORD, ip).expect(401);
    const refused = await signIn('guess-12@waterworks.example', PASSWORD, ip).expect(429);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThan(0);
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    await signIn(person.email, PASSWORD, ip).expect(429);
    await signIn(person.email, PASSWORD, from()).expect(201);
  });

  it('signs out: the token stops working at once', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const { token } = (await signIn(person.email, PASSWORD, from()).expect(201)).body;
    await t.http.delete('/v1/sessions/current').set(bearer(token)).expect(204);
    await t.http.get('/v1/me').set(bearer(token)).expect(401);
    await t.http.delete('/v1/sessions/current').set(bearer(token)).expect(401);
  });

  it('audits sign-in, failure and sign-out, and never writes the password or token to the audit trail or the logs', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const ip = from();
    await signIn(person.email, 'not quite the right phrase', ip).expect(401);
    const { token } = (await signIn(person.email, PASSWORD, ip).expect(201)).body;
    await t.http.delete('/v1/sessions/current').set(bearer(token)).expect(204);
    const entries = await t.database.prisma.auditEntry.findMany({
      where: { OR: [{ actorId: person.id }, { entityId: person.id }] },
      orderBy: { seq: 'asc' },
    });
    expect(entries.map((e) => [e.action, e.actorKind])).toEqual([
      ['sign-in-failed', 'anonymous'],
      ['sign-in', 'person'],
      ['sign-out', 'person'],
    ]);
    expect(entries[0]?.newValues).toMatchObject({ email: person.email, reason: 'wrong-password', clientAddress: ip });
    const everything = await auditAndLogText(t.database.prisma, t.logs);
    for (const secret of [PASSWORD, 'not quite the right phrase', token]) expect(everything).not.toContain(secret);
  });

  it('refuses unknown fields and missing members with 400', async () => {
    await t.http.post('/v1/sessions').send({ email: 'a@waterworks.example', password: 'x', remember: true }).expect(400);
    await t.http.post('/v1/sessions').send({ email: 'a@waterworks.example' }).expect(400);
  });
});
