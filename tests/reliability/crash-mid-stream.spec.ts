import { randomUUID } from 'node:crypto';

import { createDatabase, type Database } from '@registry/data';

import { verifyChain } from '../../apps/api/src/audit-trail/chain-verifier';
import { AIR_20C, delivered, UNCERTAINTIES } from '../calibrations/helpers';
import { seedCast, seedPerson, seedTraceableInstruments, seedVessel, sessionFor } from '../support/factories';
import { createTestDatabase, type TestDatabase } from '../support/test-database';
import { call, type ServiceProcess, startServiceProcess } from './support/service-process';

/**
 * SIGKILL in the middle of a stream of calibration writes, approvals and vessel edits
 * from several clients at once, a few times at random moments; the service restarts on
 * the same database each time. Afterwards: every acknowledged write is there with its
 * audit entry, every write cut off is wholly there or wholly absent, the audit chain
 * verifies, and no person holds two current factors for one vessel.
 * `npm run test:faults` runs more and longer rounds (RELIABILITY_LONG=1).
 */
const LONG = process.env.RELIABILITY_LONG === '1';
const ROUNDS = LONG ? 8 : 3;
/** Each round runs this long (ms) before the kill, chosen at random in the range. */
const ROUND_MS: [number, number] = LONG ? [3_000, 12_000] : [1_500, 4_000];
const ANALYSTS = 4;
const EDITORS = 2;
const PASSING = ['24.9400', '24.9450', '24.9500'];

type Kind = 'create' | 'submit' | 'approve' | 'vessel-edit';
interface Sent {
  readonly kind: Kind;
  readonly requestId: string;
  /** The calibration or vessel the request was about (unknown for a create that got no answer). */
  readonly entityId: string | null;
  readonly acknowledged: boolean;
  readonly factorId?: string;
  readonly notes?: string;
}

describe('a service killed with SIGKILL in the middle of a stream of writes', () => {
  let db: TestDatabase;
  let owner: Database;
  const sent: Sent[] = [];
  const rounds: { ms: number; acknowledged: number; cutOff: number }[] = [];

  beforeAll(async () => {
    db = await createTestDatabase();
    owner = createDatabase({ databaseUrl: db.url, poolMax: 4 });
  });
  afterAll(async () => {
    await owner.close();
    await db.drop();
  });

  it(
    'keeps every acknowledged write, leaves no half-write, and keeps the audit chain and the one-current-factor rule',
    async () => {
      const prisma = owner.prisma;
      const cast = await seedCast(prisma);
      const { balance, thermometer } = await seedTraceableInstruments(prisma, cast.lab.id, cast.people.manager.id, hoursAgo(2));
      const analysts = await Promise.all(
        Array.from({ length: ANALYSTS }, async () => {
          const person = await seedPerson(prisma, { labs: [{ labId: cast.lab.id, role: 'analyst' }] });
          // Two vessels each: approvals keep superseding the person's factor for the same vessel.
          const vessels = [await seedVessel(prisma, cast.lab.id), await seedVessel(prisma, cast.lab.id)];
          return { person, vessels, token: await sessionFor(prisma, person.id) };
        }),
      );
      const edited = await Promise.all(Array.from({ length: EDITORS }, () => seedVessel(prisma, cast.lab.id)));
      const manager = { authorization: `Bearer ${cast.tokens.manager}` };

      for (let round = 0; round < ROUNDS; round++) {
        const svc = await startServiceProcess({ databaseUrl: db.appUrl, migrationUrl: db.url });
        const stop = { now: false };
        const before = sent.length;
        const streams = [
          ...analysts.map((a) =>
            calibrationStream(svc, stop, sent, { authorization: `Bearer ${a.token}` }, manager, (n) => ({
              vesselId: a.vessels[n % 2]!.id,
              balanceId: balance.id,
              thermometerId: thermometer.id,
              // Later runs are performed later: each approval supersedes the factor before it.
              performedAt: new Date(Date.now() - 3_600_000 + n * 1000).toISOString(),
              airConditions: AIR_20C,
              uncertainties: UNCERTAINTIES,
              points: [{ replicates: delivered(PASSING) }],
            })),
          ),
          ...edited.map((v) => vesselEditStream(svc, stop, sent, manager, v.id)),
        ];
        const ms = ROUND_MS[0] + Math.random() * (ROUND_MS[1] - ROUND_MS[0]);
        await new Promise((r) => setTimeout(r, ms));
        // On a busy machine a round may not have got far: let it reach one approval before the kill.
        const waitUntil = Date.now() + 15_000;
        while (!sent.slice(before).some((x) => x.kind === 'approve' && x.acknowledged) && Date.now() < waitUntil) {
          await new Promise((r) => setTimeout(r, 50));
        }
        await svc.kill();
        stop.now = true;
        await Promise.all(streams);
        const mine = sent.slice(before);
        rounds.push({
          ms: Math.round(ms),
          acknowledged: mine.filter((s) => s.acknowledged).length,
          cutOff: mine.filter((s) => !s.acknowledged).length,
        });
      }
      // The last restart: the service comes up on what the kills left behind.
      const svc = await startServiceProcess({ databaseUrl: db.appUrl, migrationUrl: db.url });
      try {
        const ready = await call(svc.baseUrl, 'GET', '/health/ready', {});
        expect(ready.ok && ready.status).toBe(200);
      } finally {
        await svc.kill();
      }

      const acknowledged = sent.filter((s) => s.acknowledged);
      expect(acknowledged.filter((s) => s.kind === 'approve').length).toBeGreaterThan(0);
      expect(sent.filter((s) => !s.acknowledged).length).toBeGreaterThan(0);

      const q = async <T>(sql: string, params: unknown[] = []) => (await owner.pool.query(sql, params)).rows as T[];
      const audit = await q<{
        action: string;
        entity_type: string;
        entity_id: string;
        request_id: string | null;
        new_values: Record<string, unknown> | null;
      }>(`SELECT action, entity_type, entity_id, request_id, new_values FROM audit_entries WHERE entity_type IN ('calibration', 'vessel')`);
      const entriesOf = (requestId: string) => audit.filter((e) => e.request_id === requestId);
      const calibrations = new Map(
        (
          await q<{ id: string; state: string; replicates: number; results: unknown; verdict: string | null; reviewer_id: string | null }>(
            `SELECT id, state, results, verdict, reviewer_id,
                    (SELECT count(*)::int FROM jsonb_array_elements(inputs->'points') p, jsonb_array_elements(p->'replicates')) AS replicates
               FROM calibrations`,
          )
        ).map((c) => [c.id, c]),
      );
      const factors = await q<{ id: string; calibration_id: string; person_id: string; vessel_id: string; state: string }>(
        'SELECT id, calibration_id, person_id, vessel_id, state FROM factors',
      );

      // Every acknowledged request is there, with its audit entry under its own request id.
      for (const s of acknowledged) {
        const entries = entriesOf(s.requestId);
        expect({ s, entries: entries.length }).toEqual({ s, entries: 1 });
        if (s.kind === 'vessel-edit') continue;
        const cal = calibrations.get(s.entityId!);
        expect({ s, state: cal?.state }).toEqual({
          s,
          state: s.kind === 'create' ? expect.any(String) : s.kind === 'submit' ? expect.stringMatching(/submitted|approved/) : 'approved',
        });
        if (s.kind === 'approve') expect(factors.find((f) => f.calibration_id === s.entityId)?.id).toBe(s.factorId);
      }
      // A request cut off by the kill left either its whole write (with its audit entry) or nothing.
      const cutOff = sent.filter((x) => !x.acknowledged);
      for (const s of cutOff) expect(entriesOf(s.requestId).length).toBeLessThanOrEqual(1);
      console.log(
        `crash rounds ${JSON.stringify(rounds)}; acknowledged ${acknowledged.length} of ${sent.length}; ` +
          `of the ${cutOff.length} cut off, ${cutOff.filter((s) => entriesOf(s.requestId).length === 1).length} committed before the kill`,
      );

      // No half-writes anywhere: each calibration has its creation entry and its replicates;
      // each submitted one its results and submission entry; each approved one its reviewer,
      // approval entry and factor; no factor without an approved calibration.
      const count = (action: string, id: string) =>
        audit.filter((e) => e.entity_type === 'calibration' && e.action === action && e.entity_id === id).length;
      for (const cal of calibrations.values()) {
        expect({ id: cal.id, created: count('create', cal.id), replicates: cal.replicates }).toEqual({
          id: cal.id,
          created: 1,
          replicates: 3,
        });
        const submitted = cal.state !== 'draft';
        expect({ id: cal.id, submits: count('submit', cal.id), results: cal.results !== null && cal.verdict !== null }).toEqual({
          id: cal.id,
          submits: submitted ? 1 : 0,
          results: submitted,
        });
        const approved = cal.state === 'approved';
        const factor = factors.filter((f) => f.calibration_id === cal.id);
        expect({ id: cal.id, approvals: count('approve', cal.id), factors: factor.length, reviewer: cal.reviewer_id !== null }).toEqual({
          id: cal.id,
          approvals: approved ? 1 : 0,
          factors: approved ? 1 : 0,
          reviewer: approved,
        });
      }
      expect(factors.every((f) => calibrations.get(f.calibration_id)?.state === 'approved')).toBe(true);

      // Each edited vessel holds the notes of its newest audited change, and one entry per version step.
      for (const v of edited) {
        const [row] = await q<{ notes: string | null; version: number }>('SELECT notes, version FROM vessels WHERE id = $1', [v.id]);
        const updates = audit.filter((e) => e.entity_type === 'vessel' && e.entity_id === v.id && e.action === 'update');
        expect(updates.length).toBe(row!.version - 1);
        const last = sent.filter((s) => s.kind === 'vessel-edit' && s.entityId === v.id && entriesOf(s.requestId).length === 1).at(-1);
        if (last) expect(row!.notes).toBe(last.notes);
      }

      // Never two current factors for one person and vessel.
      expect(await q('SELECT person_id, vessel_id FROM factors WHERE state = $1 GROUP BY 1, 2 HAVING count(*) > 1', ['current'])).toEqual(
        [],
      );
      const chain = await verifyChain(owner.pool);
      expect(chain).toMatchObject({ intact: true, firstBroken: null });
    },
    LONG ? 600_000 : 90_000,
  );
});

const hoursAgo = (h: number) => new Date(Date.now() - h * 3_600_000);

/** One analyst: create, submit, and the manager approves; over and over until the process is gone. */
async function calibrationStream(
  svc: ServiceProcess,
  stop: { now: boolean },
  sent: Sent[],
  analyst: Record<string, string>,
  manager: Record<string, string>,
  body: (n: number) => unknown,
): Promise<void> {
  for (let n = 0; !stop.now; n++) {
    let requestId = randomUUID();
    const created = await call(svc.baseUrl, 'POST', '/v1/calibrations', { ...analyst, 'x-request-id': requestId }, body(n));
    const id = created.ok && created.status === 201 ? String(created.body.id) : null;
    sent.push({ kind: 'create', requestId, entityId: id, acknowledged: id !== null });
    if (!created.ok) return;
    if (!id) throw new Error(`create answered ${created.status}: ${JSON.stringify(created.body)}`);

    requestId = randomUUID();
    const submitted = await call(svc.baseUrl, 'POST', `/v1/calibrations/${id}/submit`, {
      ...analyst,
      'x-request-id': requestId,
      'if-match': created.etag ?? '',
    });
    sent.push({ kind: 'submit', requestId, entityId: id, acknowledged: submitted.ok && submitted.status === 200 });
    if (!submitted.ok) return;
    if (submitted.status !== 200) throw new Error(`submit answered ${submitted.status}: ${JSON.stringify(submitted.body)}`);

    requestId = randomUUID();
    const approved = await call(svc.baseUrl, 'POST', `/v1/calibrations/${id}/approve`, {
      ...manager,
      'x-request-id': requestId,
      'if-match': submitted.etag ?? '',
    });
    const impact = approved.ok ? (approved.body.impact as { factor?: { id?: string } } | undefined) : undefined;
    sent.push({
      kind: 'approve',
      requestId,
      entityId: id,
      acknowledged: approved.ok && approved.status === 200,
      ...(impact?.factor?.id ? { factorId: impact.factor.id } : {}),
    });
    if (!approved.ok) return;
    if (approved.status !== 200) throw new Error(`approve answered ${approved.status}: ${JSON.stringify(approved.body)}`);
  }
}

/** A manager changing one vessel's notes again and again with If-Match (a 412 just reads it again). */
async function vesselEditStream(
  svc: ServiceProcess,
  stop: { now: boolean },
  sent: Sent[],
  manager: Record<string, string>,
  vesselId: string,
) {
  for (let n = 0; !stop.now; n++) {
    const current = await call(svc.baseUrl, 'GET', `/v1/vessels/${vesselId}`, manager);
    if (!current.ok) return;
    const requestId = randomUUID();
    const notes = `Kept on shelf ${n} (${requestId.slice(0, 8)})`;
    const res = await call(
      svc.baseUrl,
      'PATCH',
      `/v1/vessels/${vesselId}`,
      { ...manager, 'x-request-id': requestId, 'if-match': current.etag ?? '' },
      { notes },
    );
    sent.push({ kind: 'vessel-edit', requestId, entityId: vesselId, acknowledged: res.ok && res.status === 200, notes });
    if (!res.ok) return;
    if (res.status !== 200) throw new Error(`vessel edit answered ${res.status}: ${JSON.stringify(res.body)}`);
  }
}
