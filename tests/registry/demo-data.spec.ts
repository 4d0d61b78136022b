import { execFile } from 'node:child_process';
import { join, resolve } from 'node:path';
import { promisify } from 'node:util';

import { DEMO_BALANCES, DEMO_INSTRUMENTS, DEMO_PEOPLE, DEMO_VESSELS } from '../../scripts/demo/scenario';
import { bearer, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

const run = promisify(execFile);
const SCRIPT = join(resolve(__dirname, '..', '..'), 'dist', 'scripts', 'demo.js');
const DAY_MS = 86_400_000;

/*
 * The demo loads its scenario and a year of history through the service's own
 * API. These checks look at what the registry holds afterwards, through the API
 * and SQL, without the generator's plan or arithmetic: states, factors, the
 * impact of failures, due dates, notices and the audit chain.
 */
describe('npm run demo', () => {
  let t: TestApp;
  let output: string;
  const env = () => ({ PATH: process.env.PATH, DATABASE_URL: t.testDatabase.appUrl, DATABASE_MIGRATION_URL: t.testDatabase.url });
  const sql = <T>(text: string, ...values: unknown[]) => t.database.prisma.$queryRawUnsafe<T[]>(text, ...values);
  const tokenOf = async (email: string) => {
    const person = await t.database.prisma.person.findUniqueOrThrow({ where: { email } });
    return sessionFor(t.database.prisma, person.id);
  };

  beforeAll(async () => {
    t = await startTestApp();
    output = (await run(process.execPath, [SCRIPT], { env: env() })).stdout;
  }, 240_000);
  afterAll(() => t.close());

  it('loads the scenario and prints a password per person', async () => {
    expect(output).toMatch(/Demo data loaded: 3 labs, 11 people, 40 vessels, 4 balances/);
    expect(output).toMatch(/History of 365 days loaded through the API/);
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

  it('holds calibrations in every state, spread over the past year, with passes and failures', async () => {
    const admin = bearer(await tokenOf('rosa.lindqvist@waterworks.example'));
    for (const state of ['draft', 'submitted', 'approved', 'returned', 'voided']) {
      const res = await t.http.get(`/v1/calibrations?state=${state}&limit=5`).set(admin).expect(200);
      expect({ state, some: res.body.items.length > 0 }).toEqual({ state, some: true });
    }
    const [span] = await sql<{ first: Date; last: Date; approved: bigint; failed: bigint }>(
      `SELECT min(performed_at) AS first, max(performed_at) AS last,
              count(*) FILTER (WHERE state = 'approved') AS approved,
              count(*) FILTER (WHERE state = 'approved' AND verdict = 'fail') AS failed
       FROM calibrations`,
    );
    expect(Date.now() - span!.first.getTime()).toBeGreaterThan(300 * DAY_MS);
    expect(span!.last.getTime()).toBeLessThan(Date.now());
    expect(Number(span!.approved)).toBeGreaterThan(30);
    expect(Number(span!.failed)).toBeGreaterThanOrEqual(2);
    // Every submitted record was checked after it was performed, and reviewed after it was submitted.
    const [order] = await sql<{ n: bigint }>(
      `SELECT count(*) AS n FROM calibrations
       WHERE submitted_at < performed_at OR reviewed_at < submitted_at OR (state IN ('submitted', 'approved') AND submitted_at IS NULL)`,
    );
    expect(Number(order!.n)).toBe(0);
  });

  it('gives every analyst with a passing approved calibration a current factor, and keeps superseded ones', async () => {
    const performers = await sql<{ person_id: string; current: bigint }>(
      `SELECT c.performer_id AS person_id,
              (SELECT count(*) FROM factors f WHERE f.person_id = c.performer_id AND f.state = 'current') AS current
       FROM calibrations c WHERE c.state = 'approved' AND c.verdict <> 'fail' GROUP BY c.performer_id`,
    );
    expect(performers.length).toBeGreaterThanOrEqual(6);
    for (const p of performers)
      expect({ person: p.person_id, current: Number(p.current) > 0 }).toEqual({ person: p.person_id, current: true });
    // A superseded factor points at a later factor of the same person and vessel.
    const superseded = await sql<{ ok: boolean }>(
      `SELECT (n.person_id = o.person_id AND n.vessel_id = o.vessel_id AND n.valid_from > o.valid_from) AS ok
       FROM factors o JOIN factors n ON n.id = o.superseded_by_id WHERE o.state = 'superseded'`,
    );
    expect(superseded.length).toBeGreaterThan(0);
    expect(superseded.every((r) => r.ok)).toBe(true);
    const [withdrawn] = await sql<{ n: bigint }>(
      `SELECT count(*) AS n FROM factors f JOIN calibrations c ON c.id = f.calibration_id WHERE f.state = 'withdrawn' AND c.state = 'voided'`,
    );
    expect(Number(withdrawn!.n)).toBeGreaterThan(0);
  });

  it('quarantines each vessel whose approved calibration failed, and marks the factors made on it for review', async () => {
    const failed = await sql<{ vessel_id: string; status: string; performed_at: Date }>(
      `SELECT c.vessel_id, v.status, c.performed_at FROM calibrations c JOIN vessels v ON v.id = c.vessel_id
       WHERE c.state = 'approved' AND c.verdict = 'fail'`,
    );
    expect(failed.length).toBeGreaterThan(0);
    for (const f of failed) expect(f.status).toBe('quarantined');
    const [marked] = await sql<{ n: bigint }>(
      `SELECT count(*) AS n FROM factors f JOIN calibrations c ON c.vessel_id = f.vessel_id AND c.state = 'approved' AND c.verdict = 'fail'
       WHERE f.review_required_at IS NOT NULL`,
    );
    expect(Number(marked!.n)).toBeGreaterThan(0);
  });

  it('records a failed balance check that quarantined the balance and marked that day’s factors, then a passing one', async () => {
    const [failedCheck] = await sql<{ id: string; balance_id: string; performed_at: Date }>(
      `SELECT id, balance_id, performed_at FROM balance_checks WHERE NOT passed ORDER BY performed_at LIMIT 1`,
    );
    expect(failedCheck).toBeDefined();
    const [previousPass] = await sql<{ performed_at: Date }>(
      `SELECT performed_at FROM balance_checks WHERE balance_id = $1::uuid AND passed AND performed_at < $2 ORDER BY performed_at DESC LIMIT 1`,
      failedCheck!.balance_id,
      failedCheck!.performed_at,
    );
    const affected = await sql<{ review_required_at: Date | null }>(
      `SELECT f.review_required_at FROM factors f JOIN calibrations c ON c.id = f.calibration_id
       WHERE c.balance_id = $1::uuid AND c.performed_at > $2 AND c.performed_at < $3`,
      failedCheck!.balance_id,
      previousPass!.performed_at,
      failedCheck!.performed_at,
    );
    expect(affected.length).toBeGreaterThan(0);
    expect(affected.every((f) => f.review_required_at !== null)).toBe(true);
    const statusChanges = await sql<{ status: string }>(
      `SELECT new_values->>'status' AS status FROM audit_entries
       WHERE entity_type = 'balance' AND entity_id = $1 AND new_values ? 'status' AND action <> 'create' ORDER BY seq`,
      failedCheck!.balance_id,
    );
    expect(statusChanges.map((s) => s.status)).toEqual(['quarantined', 'in-service']);
    const balance = await t.database.prisma.balance.findUniqueOrThrow({ where: { id: failedCheck!.balance_id } });
    expect(balance.status).toBe('in-service');
  });

  it('stores minimum weights from passing USP <41> checks, and keeps quick checks most working days', async () => {
    const usp = await sql<{ balance_id: string; minimum_weight_g: string; stored: string | null }>(
      `SELECT DISTINCT ON (k.balance_id) k.balance_id, k.minimum_weight_g::text, b.minimum_weight_g::text AS stored
       FROM balance_checks k JOIN balances b ON b.id = k.balance_id
       WHERE k.kind = 'usp41' AND k.passed ORDER BY k.balance_id, k.performed_at DESC`,
    );
    expect(usp.length).toBeGreaterThanOrEqual(2);
    for (const u of usp) expect(u.stored).toBe(u.minimum_weight_g);
    const [quick] = await sql<{ days: bigint }>(
      `SELECT count(DISTINCT performed_at::date) AS days FROM balance_checks WHERE kind = 'quick'`,
    );
    expect(Number(quick!.days)).toBeGreaterThan(150);
  });

  it('stops a lab’s work once its balance or thermometer is overdue', async () => {
    const teachDue = [...DEMO_BALANCES, ...DEMO_INSTRUMENTS].filter((i) => i.lab === 'TEACH').map((i) => i.dueInDays);
    const lapsed = new Date(Date.now() + Math.min(...teachDue) * DAY_MS);
    const [late] = await sql<{ n: bigint }>(
      `SELECT count(*) AS n FROM calibrations c JOIN labs l ON l.id = c.lab_id WHERE l.code = 'TEACH' AND c.performed_at > $1`,
      lapsed,
    );
    expect(Number(late!.n)).toBe(0);
    const [exceptions] = await sql<{ n: bigint }>(`SELECT count(*) AS n FROM calibrations WHERE traceability_exception IS NOT NULL`);
    expect(Number(exceptions!.n)).toBe(0);
  });

  it('lists due items in every state, factors and items alike, and raises notices', async () => {
    const admin = bearer(await tokenOf('rosa.lindqvist@waterworks.example'));
    const kinds = new Map<string, Set<string>>();
    for (const state of ['current', 'due-soon', 'overdue']) {
      const res = await t.http.get(`/v1/due?state=${state}&limit=200`).set(admin).expect(200);
      kinds.set(state, new Set(res.body.items.map((i: { subjectKind: string }) => i.subjectKind)));
    }
    expect([...(kinds.get('current') ?? [])]).toEqual(expect.arrayContaining(['vessel', 'factor']));
    expect([...(kinds.get('due-soon') ?? [])]).toEqual(expect.arrayContaining(['vessel']));
    expect([...(kinds.get('overdue') ?? [])]).toEqual(expect.arrayContaining(['vessel', 'factor', 'balance-calibration', 'instrument']));
    const manager = bearer(await tokenOf('amara.osei@waterworks.example'));
    const notices = await t.http.get('/v1/notices?limit=50').set(manager).expect(200);
    expect(notices.body.items.length).toBeGreaterThan(0);
  });

  it('writes an intact audit chain, with an entry for every calibration and factor, and refuses to load twice', async () => {
    const auditor = bearer(await tokenOf('henrik.vos@waterworks.example'));
    const verification = await t.http.get('/v1/audit-trail/verification').set(auditor).expect(200);
    expect(verification.body).toMatchObject({ intact: true, firstBroken: null });
    for (const [entity, table] of [
      ['calibration', 'calibrations'],
      ['factor', 'factors'],
      ['balance-check', 'balance_checks'],
    ] as const) {
      const [missing] = await sql<{ n: bigint }>(
        `SELECT count(*) AS n FROM ${table} x WHERE NOT EXISTS (SELECT 1 FROM audit_entries a WHERE a.entity_type = $1 AND a.entity_id = x.id::text)`,
        entity,
      );
      expect({ entity, missing: Number(missing!.n) }).toEqual({ entity, missing: 0 });
    }
    const calibrations = await t.database.prisma.calibration.count();
    const again = (await run(process.execPath, [SCRIPT], { env: env() })).stdout;
    expect(again).toMatch(/already loaded/);
    expect(await t.database.prisma.vessel.count()).toBe(DEMO_VESSELS.length);
    expect(await t.database.prisma.calibration.count()).toBe(calibrations);
  });
});
