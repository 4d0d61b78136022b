import { spawn } from 'node:child_process';
import { resolve } from 'node:path';

import { auditAndLogText } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const SCRIPT = resolve(__dirname, '../../dist/scripts/create-admin.js');

function run(args: string[], env: Record<string, string>): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((done, fail) => {
    const { DATABASE_URL: _ignored, ...inherited } = process.env;
    const child = spawn(process.execPath, [SCRIPT, ...args], { env: { ...inherited, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
    child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
    child.on('error', fail);
    child.on('close', (code) => done({ code, stdout, stderr }));
  });
}

// Built first: `npm run build` (npm test does it).
describe('npm run admin:create', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(() => t.close());

  it('creates an administrator and prints a one-time password that signs in and must then be changed', async () => {
    const result = await run(['--email', 'Greta.Holm@waterworks.example', '--name', 'Greta Holm'], { DATABASE_URL: t.testDatabase.url });
    expect(result).toMatchObject({ code: 0 });
    const password = /^ {2}(\S{16,})$/m.exec(result.stdout)?.[1];
    expect(password).toBeDefined();

    const person = await t.database.prisma.person.findUniqueOrThrow({ where: { email: 'greta.holm@waterworks.example' } });
    expect(person).toMatchObject({ displayName: 'Greta Holm', registryRole: 'administrator', status: 'active', mustChangePassword: true });
    expect(person.passwordHash?.startsWith('$argon2id$v=19$m=19456,t=2,p=1$')).toBe(true);

    const signedIn = await t.http.post('/v1/sessions').send({ email: person.email, password }).expect(201);
    expect(signedIn.body.person).toMatchObject({ registryRole: 'administrator', mustChangePassword: true });

    const entry = await t.database.prisma.auditEntry.findFirstOrThrow({ where: { entityType: 'person', entityId: person.id } });
    expect(entry).toMatchObject({ action: 'create', actorKind: 'system', actorId: null });
    expect(await auditAndLogText(t.database.prisma, t.logs)).not.toContain(password);
  });

  it('refuses an email that is already registered and changes nothing', async () => {
    const before = await t.database.prisma.person.count();
    const result = await run(['--email', 'greta.holm@waterworks.example', '--name', 'Another Greta'], { DATABASE_URL: t.testDatabase.url });
    expect(result.code).toBe(1);
    expect(result.stderr).toMatch(/already registered/);
    expect(result.stdout).not.toMatch(/password/i);
    expect(await t.database.prisma.person.count()).toBe(before);
  });

  it('explains its usage when an argument is missing or wrong', async () => {
    const missing = await run(['--email', 'kai.berg@waterworks.example'], { DATABASE_URL: t.testDatabase.url });
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/Usage: npm run admin:create/);
    const wrong = await run(['--email', 'not-an-email', '--name', 'Kai'], { DATABASE_URL: t.testDatabase.url });
    expect(wrong.code).toBe(2);
  });
});
