import { execFile } from 'node:child_process';
import { join, resolve } from 'node:path';
import { promisify } from 'node:util';

import { DEMO_PEOPLE, DEMO_VESSELS } from '../../scripts/demo/scenario';
import { bearer } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const run = promisify(execFile);
const SCRIPT = join(resolve(__dirname, '..', '..'), 'dist', 'scripts', 'demo.js');

describe('npm run demo', () => {
  let t: TestApp;
  let output: string;
  beforeAll(async () => {
    t = await startTestApp();
    const env = { PATH: process.env.PATH, DATABASE_URL: t.testDatabase.appUrl, DATABASE_MIGRATION_URL: t.testDatabase.url };
    output = (await run(process.execPath, [SCRIPT], { env })).stdout;
  });
  afterAll(() => t.close());

  it('loads the scenario and prints a password per person', async () => {
    expect(output).toMatch(/Demo data loaded: 3 labs, 11 people, 40 vessels, 4 balances/);
    expect(await t.database.prisma.vessel.count()).toBe(DEMO_VESSELS.length);
    for (const p of DEMO_PEOPLE) expect(output).toContain(p.email);
  });

  it('lets a demo manager sign in with the printed password and see only their lab', async () => {
    const line = output.split('\n').find((l) => l.includes('amara.osei@waterworks.example')) ?? '';
    const password = line.trim().split(/\s+/)[1];
    const signIn = await t.http.post('/v1/sessions').send({ email: 'amara.osei@waterworks.example', password }).expect(201);
    const vessels = await t.http.get('/v1/vessels?limit=200').set(bearer(signIn.body.token)).expect(200);
    expect(vessels.body.items.length).toBe(DEMO_VESSELS.filter((v) => v.lab === 'DW-CHEM').length);
    expect(vessels.body.items.every((v: { assetTag: string }) => v.assetTag.startsWith('DW-'))).toBe(true);
  });

  it('writes an intact audit chain and refuses to load twice', async () => {
    const env = { PATH: process.env.PATH, DATABASE_URL: t.testDatabase.appUrl, DATABASE_MIGRATION_URL: t.testDatabase.url };
    const again = (await run(process.execPath, [SCRIPT], { env })).stdout;
    expect(again).toMatch(/already loaded/);
    expect(await t.database.prisma.vessel.count()).toBe(DEMO_VESSELS.length);
    const audited = await t.database.prisma.auditEntry.count({ where: { reason: 'demo data' } });
    expect(audited).toBeGreaterThanOrEqual(DEMO_VESSELS.length + DEMO_PEOPLE.length);
  });
});
