import { auditAndLogText, bearer, seedPersonWithPassword } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const CURRENT = 'volumetric flask at twenty degrees';
const NEXT = 'burette read at eye level, slowly';

describe('changing one’s password', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  const signIn = (email: string, password: string) => t.http.post('/v1/sessions').send({ email, password });
  const change = (token: string, body: object) => t.http.post('/v1/me/password').set(bearer(token)).send(body);

  it.each([
    ['a short one', 'eleven char', /at least 12/],
    ['a common one', 'qwerty123456', /commonly used/],
    ['a common one with digits appended', 'Password2026!', /commonly used/],
    ['one containing the email name', 'my name is hanna.berg!', /email name/],
    ['one over 128 characters', 'x'.repeat(60) + 'y'.repeat(69), /at most 128/],
  ])('refuses %s with 400 naming newPassword', async (_what, newPassword, reason) => {
    const person = await seedPersonWithPassword(t.database.prisma, CURRENT, {
      email: `hanna.berg.${Math.random().toString(36).slice(2, 6)}@waterworks.example`,
    });
    const token = (await signIn(person.email, CURRENT).expect(201)).body.token;
    const email = person.email.split('@')[0] ?? '';
    const res = await change(token, { currentPassword: CURRENT, newPassword: newPassword.replace('hanna.berg', email) }).expect(400);
    expect(res.body.errors).toEqual([{ field: 'newPassword', reason: expect.stringMatching(reason) }]);
  });

  it('refuses a wrong current password', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, CURRENT);
    const token = (await signIn(person.email, CURRENT).expect(201)).body.token;
    const res = await change(token, { currentPassword: 'not the current one', newPassword: NEXT }).expect(400);
    expect(res.body.errors).toEqual([{ field: 'currentPassword', reason: 'is not your current password' }]);
  });

  it('changes it, clears must-change, keeps this session and ends the others', async () => {
    const person = await seedPersonWithPassword(t.database.prisma, CURRENT);
    await t.database.prisma.person.update({ where: { id: person.id }, data: { mustChangePassword: true } });
    const first = (await signIn(person.email, CURRENT).expect(201)).body;
    expect(first.person.mustChangePassword).toBe(true);
    const second = (await signIn(person.email, CURRENT).expect(201)).body;

    await change(second.token, { currentPassword: CURRENT, newPassword: NEXT }).expect(204);
    await t.http.get('/v1/me').set(bearer(second.token)).expect(200);
    await t.http.get('/v1/me').set(bearer(first.token)).expect(401);
    await signIn(person.email, CURRENT).expect(401);
    const again = (await signIn(person.email, NEXT).expect(201)).body;
    expect(again.person.mustChangePassword).toBe(false);

    const stored = await t.database.prisma.person.findUniqueOrThrow({ where: { id: person.id } });
    expect(stored.passwordHash?.startsWith('$argon2id$v=19$m=19456,t=2,p=1$')).toBe(true);
    const entry = await t.database.prisma.auditEntry.findFirstOrThrow({ where: { action: 'password-change', entityId: person.id } });
    expect(entry.newValues).toMatchObject({ mustChangePassword: false, otherSessionsEnded: 1 });
    const everything = await auditAndLogText(t.database.prisma, t.logs);
    for (const secret of [CURRENT, NEXT, first.token, second.token]) expect(everything).not.toContain(secret);
  });
});
