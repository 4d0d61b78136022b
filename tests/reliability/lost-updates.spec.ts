import { randomUUID } from 'node:crypto';

import type { Response } from 'supertest';

import { bearer, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import {
  type CalibrationsClient,
  calibrationsAs,
  type CalibrationWorld,
  calibrationWorld,
  createAndSubmit,
  expectStatus,
  pipetteRun,
} from '../calibrations/helpers';

const N = 10;
const ROUNDS = 3;
const PASSING = ['24.9400', '24.9450', '24.9500'];

/** One 200 and N − 1 412 problems, whatever order the answers came in. */
function expectOneWinner(answers: readonly Response[]): Response {
  const statuses = answers.map((r) => r.status).sort();
  expect(statuses).toEqual([200, ...Array<number>(answers.length - 1).fill(412)]);
  for (const lost of answers.filter((r) => r.status === 412)) {
    expect(lost.headers['content-type']).toContain('application/problem+json');
    expect(lost.body.code).toBe('precondition-failed');
  }
  return answers.find((r) => r.status === 200) as Response;
}

/**
 * Lost updates: N edits of one record sent at once, all with the If-Match of the same read.
 * Exactly one wins; every other gets 412, and the audit trail holds one change per round.
 */
describe('concurrent edits with the same If-Match', () => {
  let t: TestApp;
  let w: CalibrationWorld;
  let manager: CalibrationsClient;
  let analyst: CalibrationsClient;
  const audited = (entityId: string, action: string) => t.database.prisma.auditEntry.count({ where: { entityId, action } });

  beforeAll(async () => {
    t = await startTestApp();
    w = await calibrationWorld(t);
    manager = calibrationsAs(t, w.cast.tokens.manager);
    analyst = calibrationsAs(t, w.cast.tokens.analyst);
  });
  afterAll(() => t.close());

  it(`vessel: ${N} PATCHes at once, ${ROUNDS} rounds: one 200 per round, the rest 412, one audit entry per round`, async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    for (let round = 1; round <= ROUNDS; round++) {
      const etag = `"v${round}"`;
      const answers = await Promise.all(
        Array.from({ length: N }, (_, i) =>
          t.http
            .patch(`/v1/vessels/${vessel.id}`)
            .set(bearer(w.cast.tokens.manager))
            .set('if-match', etag)
            .send({ location: `Bench ${round}.${i}` }),
        ),
      );
      const winner = expectOneWinner(answers);
      expect(winner.headers.etag).toBe(`"v${round + 1}"`);
      const stored = await w.prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } });
      expect({ version: stored.version, location: stored.location }).toEqual({ version: round + 1, location: winner.body.location });
      expect(await audited(vessel.id, 'update')).toBe(round);
    }
  });

  it(`vessel: the same race with an Idempotency-Key on each edit; the keys of the losers stay free`, async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const keys = Array.from({ length: N }, () => randomUUID());
    const send = (i: number, etag: string) =>
      t.http
        .patch(`/v1/vessels/${vessel.id}`)
        .set(bearer(w.cast.tokens.manager))
        .set('if-match', etag)
        .set('idempotency-key', keys[i] as string)
        .send({ notes: `Edit ${i}` });
    const answers = await Promise.all(keys.map((_, i) => send(i, '"v1"')));
    const winner = expectOneWinner(answers);
    expect(await audited(vessel.id, 'update')).toBe(1);
    const winnerIndex = answers.indexOf(winner);
    expect(await w.prisma.idempotencyKey.count({ where: { key: { in: keys } } })).toBe(1);
    // The winner's retry replays its 200; a loser's key, read again with the new ETag, runs.
    const replay = await send(winnerIndex, '"v1"').expect(200);
    expect(replay.headers['idempotent-replayed']).toBe('true');
    const loser = (winnerIndex + 1) % N;
    const retried = await send(loser, winner.headers.etag as string).expect(200);
    expect(retried.body.notes).toBe(`Edit ${loser}`);
    expect(await audited(vessel.id, 'update')).toBe(2);
  });

  it(`calibration draft: ${N} PATCHes at once, one 200 and one audit entry`, async () => {
    const created = expectStatus(
      await analyst.create(pipetteRun(w, PASSING, { vesselId: (await seedVessel(w.prisma, w.cast.lab.id)).id })),
      201,
    );
    const id = created.body.id as string;
    const answers = await Promise.all(
      Array.from({ length: N }, (_, i) => analyst.patch(id, created.headers.etag as string, { notes: `Second look ${i}` })),
    );
    const winner = expectOneWinner(answers);
    const stored = await w.prisma.calibration.findUniqueOrThrow({ where: { id } });
    expect({ version: stored.version, notes: stored.notes }).toEqual({ version: 2, notes: winner.body.notes });
    expect(await audited(id, 'update')).toBe(1);
  });

  it(`calibration approval: ${N} approvals at once, one 200, one factor, one audit entry`, async () => {
    const vessel = await seedVessel(w.prisma, w.cast.lab.id);
    const submitted = await createAndSubmit(analyst, pipetteRun(w, PASSING, { vesselId: vessel.id }));
    const answers = await Promise.all(Array.from({ length: N }, () => manager.act(submitted.id, 'approve', submitted.etag)));
    const winner = expectOneWinner(answers);
    expect(winner.body.state).toBe('approved');
    expect(await w.prisma.factor.count({ where: { calibrationId: submitted.id } })).toBe(1);
    expect(await w.prisma.factor.count({ where: { vesselId: vessel.id, state: 'current' } })).toBe(1);
    expect(await audited(submitted.id, 'approve')).toBe(1);
  });
});
