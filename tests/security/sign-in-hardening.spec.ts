import { readFileSync } from 'node:fs';
import { join } from 'node:path';

import type TestAgent from 'supertest/lib/agent';

import { bearer, seedPersonWithPassword } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { secondInstance } from './second-instance';

/*
 * Password guessing in parallel, against two instances of the service on one
 * database: the failure limits hold however the attempts race. And every
 * stored password hash is argon2id with the parameters the README documents.
 */

const MAX_FAILURES = 5;
const ADDRESS_FACTOR = 4;
const ATTEMPTS = 50;
const PASSWORD = 'chlorine residual at the tap';
const ENV = { SIGN_IN_MAX_FAILURES: String(MAX_FAILURES), SIGN_IN_WINDOW_MINUTES: '15', TRUST_PROXY: 'true' };

describe('sign-in under parallel guessing', () => {
  let t: TestApp;
  let other: Awaited<ReturnType<typeof secondInstance>>;
  let address = 0;
  const nextAddress = () => `198.51.100.${++address}`;

  beforeAll(async () => {
    t = await startTestApp(ENV);
    other = await secondInstance(t, ENV);
  }, 60_000);
  afterAll(async () => {
    await other.close();
    await t.close();
  });

  /** Fires every attempt at once, alternating between the two instances; returns the statuses. */
  async function race(attempts: { email: string; password: string; ip: string }[]): Promise<number[]> {
    const instances: TestAgent[] = [t.http, other.http];
    const answers = await Promise.all(
      attempts.map((a, i) =>
        (instances[i % 2] as TestAgent).post('/v1/sessions').set('x-forwarded-for', a.ip).send({ email: a.email, password: a.password }),
      ),
    );
    for (const res of answers) {
      if (res.status >= 400) expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
      if (res.status === 429) expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
    }
    return answers.map((r) => r.status);
  }
  const count = (statuses: number[], status: number) => statuses.filter((s) => s === status).length;

  it(`lets at most ${MAX_FAILURES} of ${ATTEMPTS} simultaneous wrong passwords for one account be checked, from many addresses`, async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const statuses = await race(
      Array.from({ length: ATTEMPTS }, (_, i) => ({ email: person.email, password: `wrong guess ${i}`, ip: nextAddress() })),
    );
    expect({ checked: count(statuses, 401), refused: count(statuses, 429) }).toEqual({
      checked: MAX_FAILURES,
      refused: ATTEMPTS - MAX_FAILURES,
    });
    expect(await t.database.prisma.signInFailure.count({ where: { email: person.email } })).toBe(MAX_FAILURES);
    // The account stays closed for the window, even to the right password from a fresh address.
    await other.http
      .post('/v1/sessions')
      .set('x-forwarded-for', nextAddress())
      .send({ email: person.email, password: PASSWORD })
      .expect(429);
  });

  it('counts spellings of one email that differ in case and surrounding spaces as one account', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const spell = (i: number) => {
      const cased = [...person.email].map((c, j) => ((i >> (j % 8)) & 1 ? c.toUpperCase() : c)).join('');
      return i % 3 === 0 ? ` ${cased}\t` : cased;
    };
    const statuses = await race(
      Array.from({ length: ATTEMPTS }, (_, i) => ({ email: spell(i), password: `guess ${i}`, ip: nextAddress() })),
    );
    expect(count(statuses, 401)).toBe(MAX_FAILURES);
  });

  it(`lets at most ${MAX_FAILURES * ADDRESS_FACTOR} of ${ATTEMPTS} simultaneous attempts from one address be checked, across accounts`, async () => {
    const ip = nextAddress();
    const statuses = await race(
      Array.from({ length: ATTEMPTS }, (_, i) => ({ email: `guess-${i}-${ip}@waterworks.example`, password: PASSWORD, ip })),
    );
    expect({ checked: count(statuses, 401), refused: count(statuses, 429) }).toEqual({
      checked: MAX_FAILURES * ADDRESS_FACTOR,
      refused: ATTEMPTS - MAX_FAILURES * ADDRESS_FACTOR,
    });
    expect(await t.database.prisma.signInFailure.count({ where: { clientAddress: ip } })).toBe(MAX_FAILURES * ADDRESS_FACTOR);
  });

  it('still lets the right password in when it races with fewer wrong ones than the limit', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, PASSWORD);
    const attempts = [
      ...Array.from({ length: MAX_FAILURES - 1 }, (_, i) => ({ email: person.email, password: `typo ${i}`, ip: nextAddress() })),
      { email: person.email, password: PASSWORD, ip: nextAddress() },
    ];
    const statuses = await race(attempts);
    expect(statuses.slice(-1)).toEqual([201]);
    expect(count(statuses, 429)).toBe(0);
  });
});

describe('stored password hashes', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  }, 60_000);
  afterAll(() => t.close());

  /** The argon2id parameters the README promises: "m = 19456 KiB, t = 2 …, p = 1". */
  function documented(): { m: number; t: number; p: number } {
    const readme = readFileSync(join(__dirname, '../../README.md'), 'utf8');
    const match = /argon2id[^.]*?m = (\d+)\s*KiB[^.]*?t = (\d+)[^.]*?p = (\d+)/s.exec(readme);
    if (!match) throw new Error('README.md does not document the argon2id parameters as "argon2id … m = N KiB … t = N … p = N"');
    return { m: Number(match[1]), t: Number(match[2]), p: Number(match[3]) };
  }

  /** The PHC string's algorithm and parameters: $argon2id$v=19$m=…,t=…,p=…$salt$hash. */
  function phc(hash: string | null): { algorithm: string; version: number; m: number; t: number; p: number; saltBytes: number } {
    const match = /^\$(argon2(?:id|i|d))\$v=(\d+)\$m=(\d+),t=(\d+),p=(\d+)\$([A-Za-z0-9+/]+)\$([A-Za-z0-9+/]+)$/.exec(hash ?? '');
    if (!match) throw new Error(`not a PHC argon2 string: ${hash}`);
    const [, algorithm, v, m, tc, p, salt] = match as unknown as string[];
    return {
      algorithm: algorithm as string,
      version: Number(v),
      m: Number(m),
      t: Number(tc),
      p: Number(p),
      saltBytes: Buffer.from(salt as string, 'base64').length,
    };
  }

  it('hashes the one-time password of a new person and the password they choose with the documented argon2id parameters', async () => {
    const expected = documented();
    const admin = await seedPersonWithPassword(t.database.prisma, PASSWORD, { registryRole: 'administrator' });
    const signIn = async (email: string, password: string) =>
      (await t.http.post('/v1/sessions').send({ email, password }).expect(201)).body.token as string;
    const adminToken = await signIn(admin.email, PASSWORD);
    const created = await t.http
      .post('/v1/people')
      .set(bearer(adminToken))
      .send({ email: 'hash.check@waterworks.example', displayName: 'Hash Check' })
      .expect(201);
    const stored = async () =>
      (await t.database.prisma.person.findUniqueOrThrow({ where: { id: created.body.id as string } })).passwordHash;

    const initial = phc(await stored());
    const token = await signIn('hash.check@waterworks.example', created.body.initialPassword as string);
    await t.http
      .post('/v1/me/password')
      .set(bearer(token))
      .send({ currentPassword: created.body.initialPassword, newPassword: 'jar test flocculation at dawn' })
      .expect(204);
    const chosen = phc(await stored());

    for (const h of [initial, chosen]) {
      expect(h).toMatchObject({ algorithm: 'argon2id', version: 19, ...expected });
      expect(h.saltBytes).toBeGreaterThanOrEqual(16);
    }
    expect(await stored()).not.toContain('jar test flocculation at dawn');
  });
});
