import { randomUUID } from 'node:crypto';

import { Client } from 'pg';

import { ManualClock } from '../../apps/api/src/common/clock';
import { requestFingerprint } from '../../apps/api/src/idempotency/idempotency-key';
import { type CalibrationWorld, calibrationsAs, calibrationWorld, createAndSubmit, pipetteRun } from '../calibrations/helpers';
import { bearer, seedCast, seedPerson, seedVessel, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const HOUR = 3_600_000;
let tags = 0;
const nextTag = () => `IDEM-${process.pid}-${++tags}`;

/**
 * Idempotency-Key on writes: a retry gets the first answer and writes nothing twice, also
 * when the copies arrive together; keys are per caller, expire, and are not burned by a
 * request that failed.
 */
describe('Idempotency-Key on writes', () => {
  let t: TestApp;
  let cast: Cast;
  const clock = new ManualClock(new Date());
  const pipette = (overrides: Record<string, unknown> = {}) => ({
    labId: cast.lab.id,
    assetTag: nextTag(),
    kind: 'one-mark-pipette',
    nominalVolumeMl: '25',
    accuracyClass: 'A',
    material: 'borosilicate-3-3',
    ...overrides,
  });
  const createVessel = (body: Record<string, unknown>, key: string | null, token = cast.tokens.manager) => {
    const req = t.http.post('/v1/vessels').set(bearer(token));
    return (key === null ? req : req.set('idempotency-key', key)).send(body);
  };
  const vesselsTagged = async (assetTag: string) => (await t.database.prisma.vessel.findMany({ where: { assetTag } })).map((v) => v.id);
  const auditEntries = (entityId: string, action: string) => t.database.prisma.auditEntry.count({ where: { entityId, action } });

  let w: CalibrationWorld;
  beforeAll(async () => {
    t = await startTestApp({}, { clock });
    w = await calibrationWorld(t);
    cast = w.cast;
  });
  afterAll(() => t.close());

  it('answers a retry with the first response (status, body, ETag, Location) and writes the vessel once', async () => {
    const body = pipette();
    const key = randomUUID();
    const first = await createVessel(body, key).expect(201);
    expect(first.headers['idempotent-replayed']).toBeUndefined();
    clock.advance(60_000);
    const again = await createVessel(body, key).expect(201);
    expect(again.headers['idempotent-replayed']).toBe('true');
    expect(again.body).toEqual(first.body);
    expect(again.text).toBe(first.text);
    expect(again.headers.etag).toBe(first.headers.etag);
    expect(again.headers.location).toBe(`/v1/vessels/${first.body.id}`);
    expect(await vesselsTagged(body.assetTag as string)).toEqual([first.body.id]);
    expect(await auditEntries(first.body.id, 'create')).toBe(1);
  });

  it('runs ten copies sent at once exactly once: every copy gets the same 201, one row, one audit entry', async () => {
    const body = pipette();
    const key = randomUUID();
    const answers = await Promise.all(Array.from({ length: 10 }, () => createVessel(body, key)));
    expect(answers.map((r) => r.status)).toEqual(Array(10).fill(201));
    const ids = new Set(answers.map((r) => r.body.id as string));
    expect(ids.size).toBe(1);
    expect(answers.filter((r) => r.headers['idempotent-replayed'] === 'true')).toHaveLength(9);
    expect(new Set(answers.map((r) => r.text)).size).toBe(1);
    const [id] = [...ids];
    expect(await vesselsTagged(body.assetTag as string)).toEqual([id]);
    expect(await auditEntries(id as string, 'create')).toBe(1);
    const keys = await t.database.prisma.idempotencyKey.count({ where: { key } });
    expect(keys).toBe(1);
  });

  it('runs ten approvals of one calibration sent at once with one key exactly once: one factor, one audit entry', async () => {
    const analyst = calibrationsAs(t, cast.tokens.analyst);
    const vessel = await seedVessel(t.database.prisma, cast.lab.id);
    const submitted = await createAndSubmit(analyst, pipetteRun(w, ['24.9400', '24.9450', '24.9500'], { vesselId: vessel.id }));
    const key = randomUUID();
    const answers = await Promise.all(
      Array.from({ length: 10 }, () =>
        t.http
          .post(`/v1/calibrations/${submitted.id}/approve`)
          .set(bearer(cast.tokens.manager))
          .set('if-match', submitted.etag)
          .set('idempotency-key', key)
          .send({}),
      ),
    );
    expect(answers.map((r) => r.status)).toEqual(Array(10).fill(200));
    expect(new Set(answers.map((r) => r.text)).size).toBe(1);
    expect(new Set(answers.map((r) => r.headers.etag)).size).toBe(1);
    expect(answers[0]?.body.state).toBe('approved');
    expect(await t.database.prisma.factor.count({ where: { calibrationId: submitted.id } })).toBe(1);
    expect(await auditEntries(submitted.id, 'approve')).toBe(1);
  });

  it('answers the retry of an update with the first 200 and its new ETag, not 412, and changes the vessel once', async () => {
    const vessel = await seedVessel(t.database.prisma, cast.lab.id);
    const key = randomUUID();
    const patch = () =>
      t.http
        .patch(`/v1/vessels/${vessel.id}`)
        .set(bearer(cast.tokens.manager))
        .set('if-match', '"v1"')
        .set('idempotency-key', key)
        .send({ location: 'Fume cupboard 2' });
    const first = await patch().expect(200);
    expect(first.headers.etag).toBe('"v2"');
    const again = await patch().expect(200);
    expect(again.body).toEqual(first.body);
    expect(again.headers.etag).toBe('"v2"');
    expect((await t.database.prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } })).version).toBe(2);
    expect(await auditEntries(vessel.id, 'update')).toBe(1);
    // The same key on the update against the new version is another request: refused, nothing changed.
    const otherVersion = await t.http
      .patch(`/v1/vessels/${vessel.id}`)
      .set(bearer(cast.tokens.manager))
      .set('if-match', '"v2"')
      .set('idempotency-key', key)
      .send({ location: 'Fume cupboard 2' })
      .expect(422);
    expect(otherVersion.body).toMatchObject({ code: 'idempotency-key-reused', errors: [{ field: 'Idempotency-Key' }] });
    expect((await t.database.prisma.vessel.findUniqueOrThrow({ where: { id: vessel.id } })).version).toBe(2);
  });

  it('replays a 204 without a body (taking a person out of a lab twice)', async () => {
    const member = await seedPerson(t.database.prisma, { labs: [{ labId: cast.lab.id, role: 'analyst' }] });
    const key = randomUUID();
    const remove = () =>
      t.http.delete(`/v1/labs/${cast.lab.id}/members/${member.id}`).set(bearer(cast.tokens.manager)).set('idempotency-key', key);
    const first = await remove().expect(204);
    expect(first.text).toBe('');
    const again = await remove().expect(204);
    expect(again.headers['idempotent-replayed']).toBe('true');
    expect(again.text).toBe('');
    // Without the key the same request is a new one: the membership is gone.
    await t.http.delete(`/v1/labs/${cast.lab.id}/members/${member.id}`).set(bearer(cast.tokens.manager)).expect(404);
  });

  describe('a request whose key another transaction holds waits for that transaction’s outcome', () => {
    // The test holds the key the way a first request does: claimed in an open transaction.
    const holdKey = async (key: string, body: Record<string, unknown>) => {
      const holder = new Client({ connectionString: t.testDatabase.appUrl });
      await holder.connect();
      await holder.query('BEGIN');
      await holder.query(
        `INSERT INTO idempotency_keys (caller_kind, caller_id, idempotency_key, request_method, request_path, request_hash, created_at, expires_at)
         VALUES ('person', $1, $2, 'POST', '/v1/vessels', $3, $4, $5)`,
        [cast.people.manager.id, key, requestFingerprint('POST', '/v1/vessels', body), clock.now(), new Date(clock.now().getTime() + HOUR)],
      );
      return holder;
    };
    const settled = async (p: Promise<unknown>) => Promise.race([p.then(() => true), new Promise((r) => setTimeout(() => r(false), 400))]);

    it('gets the first answer when that transaction commits it', async () => {
      const key = randomUUID();
      const body = pipette();
      const holder = await holdKey(key, body);
      const waiting = createVessel(body, key).then((r) => r);
      expect(await settled(waiting)).toBe(false);
      await holder.query(
        `UPDATE idempotency_keys SET response_status = 201, response_headers = '{"etag": "\\"v1\\""}', response_body = '{"answer":"first"}'
          WHERE idempotency_key = $1`,
        [key],
      );
      await holder.query('COMMIT');
      await holder.end();
      const res = await waiting;
      expect(res.status).toBe(201);
      expect(res.body).toEqual({ answer: 'first' });
      expect(res.headers.etag).toBe('"v1"');
      expect(await vesselsTagged(body.assetTag as string)).toEqual([]);
    });

    it('runs the write itself when that transaction rolls back', async () => {
      const key = randomUUID();
      const body = pipette();
      const holder = await holdKey(key, body);
      const waiting = createVessel(body, key).then((r) => r);
      expect(await settled(waiting)).toBe(false);
      await holder.query('ROLLBACK');
      await holder.end();
      const res = await waiting;
      expect(res.status).toBe(201);
      expect(res.headers['idempotent-replayed']).toBeUndefined();
      expect(await vesselsTagged(body.assetTag as string)).toEqual([res.body.id]);
    });
  });

  it('refuses the key with another body, path or method (422 naming the header) and writes nothing', async () => {
    const key = randomUUID();
    const body = pipette();
    const first = await createVessel(body, key).expect(201);
    const otherBody = pipette();
    const res = await createVessel(otherBody, key).expect(422);
    expect(res.headers['content-type']).toContain('application/problem+json');
    expect(res.body).toMatchObject({ code: 'idempotency-key-reused', errors: [{ field: 'Idempotency-Key' }] });
    expect(res.body.detail).toContain('POST /v1/vessels');
    expect(await vesselsTagged(otherBody.assetTag as string)).toEqual([]);
    const otherPath = await t.http
      .patch(`/v1/vessels/${first.body.id}`)
      .set(bearer(cast.tokens.manager))
      .set('if-match', '"v1"')
      .set('idempotency-key', key)
      .send({ notes: 'moved' })
      .expect(422);
    expect(otherPath.body.code).toBe('idempotency-key-reused');
    expect((await t.database.prisma.vessel.findUniqueOrThrow({ where: { id: first.body.id } })).version).toBe(1);
    // The same members in another order are the same request.
    const reordered = Object.fromEntries(Object.entries(body).reverse());
    expect((await createVessel(reordered, key).expect(201)).headers['idempotent-replayed']).toBe('true');
  });

  it.each([
    ['empty', ''],
    ['too long', 'k'.repeat(129)],
    ['a space', 'two words'],
    ['a non-ASCII letter', 'clé-1'],
    ['a comma list', 'a,b'],
  ])('refuses a key that is %s with 400 naming the header, and writes nothing', async (_what, key) => {
    const body = pipette();
    const res = await createVessel(body, key).expect(400);
    expect(res.body).toMatchObject({ code: 'validation-failed', errors: [{ field: 'Idempotency-Key' }] });
    expect(await vesselsTagged(body.assetTag as string)).toEqual([]);
  });

  it('takes a key of 128 characters, and a quoted key as the same key', async () => {
    const key = `${'k'.repeat(120)}-${String(tags).padStart(7, '0')}`;
    expect(key).toHaveLength(128);
    const body = pipette();
    const first = await createVessel(body, key).expect(201);
    const quoted = await createVessel(body, `"${key}"`).expect(201);
    expect(quoted.headers['idempotent-replayed']).toBe('true');
    expect(quoted.body.id).toBe(first.body.id);
  });

  it('keeps keys per caller: another person using the same key runs their own request and never sees the first answer', async () => {
    const key = randomUUID();
    const mine = await createVessel(pipette(), key, cast.tokens.manager).expect(201);
    const body = pipette();
    const theirs = await createVessel(body, key, cast.tokens.admin).expect(201);
    expect(theirs.headers['idempotent-replayed']).toBeUndefined();
    expect(theirs.body.id).not.toBe(mine.body.id);
    expect(theirs.body.assetTag).toBe(body.assetTag);
    // Even the very same body: the other person's request is their own (here refused: the tag is taken).
    const sameBody = await createVessel({ ...body }, key, cast.tokens.manager).expect(422);
    expect(sameBody.body.code).toBe('idempotency-key-reused');
    const secondManager = await seedPerson(t.database.prisma, { labs: [{ labId: cast.lab.id, role: 'manager' }] });
    const clash = await createVessel(body, key, await sessionFor(t.database.prisma, secondManager.id, clock.now())).expect(409);
    expect(clash.body.code).toBe('conflict');
  });

  it('does not burn a key on a request that failed: the corrected request with the same key runs', async () => {
    const key = randomUUID();
    const body = pipette();
    const invalid = await createVessel({ ...body, nominalVolumeMl: 'twenty-five' }, key).expect(400);
    expect(invalid.body.code).toBe('validation-failed');
    const forbidden = await createVessel(body, key, cast.tokens.analyst).expect(403);
    expect(forbidden.body.code).toBe('forbidden');
    expect(await t.database.prisma.idempotencyKey.count({ where: { key } })).toBe(0);
    const corrected = await createVessel(body, key).expect(201);
    expect(corrected.headers['idempotent-replayed']).toBeUndefined();
    expect((await createVessel(body, key).expect(201)).body).toEqual(corrected.body);
    expect(await vesselsTagged(body.assetTag as string)).toEqual([corrected.body.id]);
  });

  it('refuses the header on writes whose answer cannot be kept, and ignores it on computations', async () => {
    const before = await t.database.prisma.serviceCredential.count();
    const res = await t.http
      .post('/v1/service-credentials')
      .set(bearer(cast.tokens.admin))
      .set('idempotency-key', randomUUID())
      .send({ name: 'sample-management', scopes: ['factors:read'] })
      .expect(400);
    expect(res.body).toMatchObject({
      code: 'validation-failed',
      errors: [{ field: 'Idempotency-Key', reason: 'is not accepted on this route' }],
    });
    expect(res.body.detail).toContain('secret');
    expect(await t.database.prisma.serviceCredential.count()).toBe(before);
    const density = await t.http
      .post('/v1/calculations/water-density')
      .set(bearer(cast.tokens.analyst))
      .set('idempotency-key', 'not checked here')
      .send({ temperatureC: '20' })
      .expect(200);
    expect(density.headers['idempotent-replayed']).toBeUndefined();
  });

  it('documents the header on every write route that takes it, and on none that does not', async () => {
    const doc = (await t.http.get('/openapi.json').expect(200)).body as {
      paths: Record<string, Record<string, { parameters?: { name: string; in: string }[] }>>;
    };
    const keyed = (path: string, method: string) =>
      (doc.paths[path]?.[method]?.parameters ?? []).some((p) => p.in === 'header' && p.name === 'Idempotency-Key');
    expect(keyed('/v1/vessels', 'post')).toBe(true);
    expect(keyed('/v1/vessels/{id}', 'patch')).toBe(true);
    expect(keyed('/v1/labs/{labId}/members/{personId}', 'delete')).toBe(true);
    expect(keyed('/v1/labs/{labId}/members/{personId}', 'put')).toBe(true);
    expect(keyed('/v1/service-credentials', 'post')).toBe(false);
    expect(keyed('/v1/calculations/water-density', 'post')).toBe(false);
    expect(keyed('/v1/vessels', 'get')).toBe(false);
  });

  it('writes the key in the same transaction as the change: when recording the answer fails, the change is not kept either', async () => {
    // A fault injected by the owner: recording the answer of this one request fails, after the
    // vessel row and its audit entry were written in the same transaction.
    const owner = new Client({ connectionString: t.testDatabase.url });
    await owner.connect();
    try {
      await owner.query(`
        CREATE FUNCTION fail_answer() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN
          IF NEW.response_body LIKE '%answer-fails-here%' THEN RAISE EXCEPTION 'injected fault while recording the answer'; END IF;
          RETURN NEW;
        END $$;
        CREATE TRIGGER fail_answer BEFORE UPDATE ON idempotency_keys FOR EACH ROW EXECUTE FUNCTION fail_answer();`);
      const body = pipette({ notes: 'answer-fails-here' });
      const key = randomUUID();
      const res = await createVessel(body, key).expect(500);
      expect(res.body.code).toBe('internal-error');
      expect(await vesselsTagged(body.assetTag as string)).toEqual([]);
      const audit = await t.database.prisma.$queryRaw<{ n: bigint }[]>`
        SELECT count(*) AS n FROM audit_entries WHERE new_values->>'assetTag' = ${body.assetTag as string}`;
      expect(Number(audit[0]?.n)).toBe(0);
      expect(await t.database.prisma.idempotencyKey.count({ where: { key } })).toBe(0);
      await owner.query('DROP TRIGGER fail_answer ON idempotency_keys; DROP FUNCTION fail_answer()');
      // The retry with the same key runs the write for the first time.
      const retry = await createVessel(body, key).expect(201);
      expect(retry.headers['idempotent-replayed']).toBeUndefined();
      expect(await vesselsTagged(body.assetTag as string)).toEqual([retry.body.id]);
    } finally {
      await owner.end();
    }
  });

  it('keeps no answer that holds a secret: no keyed route’s response has a secret, token or password member', async () => {
    type Schema = {
      $ref?: string;
      properties?: Record<string, Schema>;
      items?: Schema;
      allOf?: Schema[];
      anyOf?: Schema[];
      oneOf?: Schema[];
    };
    type Operation = {
      parameters?: { name: string; in: string }[];
      responses?: Record<string, { content?: Record<string, { schema?: Schema }> }>;
    };
    const doc = (await t.http.get('/openapi.json').expect(200)).body as {
      paths: Record<string, Record<string, Operation>>;
      components: { schemas: Record<string, Schema> };
    };
    const members = (schema: Schema | undefined, seen = new Set<string>()): string[] => {
      if (!schema) return [];
      if (schema.$ref) {
        const name = schema.$ref.split('/').pop() as string;
        if (seen.has(name)) return [];
        seen.add(name);
        return members(doc.components.schemas[name], seen);
      }
      return [
        ...Object.entries(schema.properties ?? {}).flatMap(([k, v]) => [k, ...members(v, seen)]),
        ...members(schema.items, seen),
        ...[...(schema.allOf ?? []), ...(schema.anyOf ?? []), ...(schema.oneOf ?? [])].flatMap((x) => members(x, seen)),
      ];
    };
    const secretMembers = (op: Operation) =>
      Object.entries(op.responses ?? {})
        .filter(([status]) => status.startsWith('2'))
        .flatMap(([, r]) => Object.values(r.content ?? {}).flatMap((c) => members(c.schema)))
        .filter((name) => (/secret|token|password/i.test(name) || name === 'key') && !/At$|^mustChangePassword$/.test(name));
    const writes = Object.entries(doc.paths).flatMap(([path, ops]) =>
      Object.entries(ops)
        .filter(([method]) => ['post', 'put', 'patch', 'delete'].includes(method))
        .map(([method, op]) => ({ route: `${method.toUpperCase()} ${path}`, op })),
    );
    const keyed = writes.filter(({ op }) => (op.parameters ?? []).some((p) => p.in === 'header' && p.name === 'Idempotency-Key'));
    expect(keyed.length).toBeGreaterThan(20);
    expect(keyed.filter(({ op }) => secretMembers(op).length > 0).map(({ route }) => route)).toEqual([]);
    // The check sees secrets where they are: the routes that show one are those exempted for it.
    const showingSecrets = writes.filter(({ op }) => secretMembers(op).length > 0).map(({ route }) => route);
    expect(showingSecrets.sort()).toEqual([
      'POST /v1/labs/{labId}/calendar-feeds',
      'POST /v1/labs/{labId}/webhooks',
      'POST /v1/labs/{labId}/webhooks/{webhookId}/rotate-secret',
      'POST /v1/people',
      'POST /v1/service-credentials',
      'POST /v1/service-credentials/{credentialId}/rotate',
      'POST /v1/sessions',
    ]);
  });

  it('never commits a key without its answer (the database refuses it)', async () => {
    const insert = t.database.prisma.$executeRaw`
      INSERT INTO idempotency_keys (caller_kind, caller_id, idempotency_key, request_method, request_path, request_hash, created_at, expires_at)
      VALUES ('person', ${cast.people.manager.id}::uuid, 'unanswered', 'POST', '/v1/vessels', sha256('x'), now(), now() + interval '1 hour')`;
    await expect(insert).rejects.toThrow(/without its response/);
    expect(await t.database.prisma.idempotencyKey.count({ where: { key: 'unanswered' } })).toBe(0);
  });

  // Last: the clock moves a day on.
  it('keeps a key for IDEMPOTENCY_KEY_TTL_HOURS (24 h): replayed just before, free for a new request after', async () => {
    const key = randomUUID();
    const first = await createVessel(pipette(), key).expect(201);
    // Sessions time out long before keys do: sign in again at each moment.
    const freshToken = () => sessionFor(t.database.prisma, cast.people.manager.id, clock.now());
    clock.advance(24 * HOUR - 1_000);
    const late = await createVessel(pipette(), key, await freshToken()).expect(422);
    expect(late.body.code).toBe('idempotency-key-reused');
    clock.advance(61_000);
    const expired = () => t.database.prisma.idempotencyKey.count({ where: { expiresAt: { lte: clock.now() } } });
    expect(await expired()).toBeGreaterThan(0);
    const token = await freshToken();
    const body = pipette();
    const fresh = await createVessel(body, key, token).expect(201);
    // The expired keys of earlier tests are deleted in the background (at most once a minute per instance;
    // the request just before, at 24 h less a second, was the last purge).
    for (let i = 0; i < 50 && (await expired()) > 0; i++) await new Promise((r) => setTimeout(r, 50));
    expect(await expired()).toBe(0);
    expect(fresh.headers['idempotent-replayed']).toBeUndefined();
    expect(fresh.body.id).not.toBe(first.body.id);
    expect(await vesselsTagged(body.assetTag as string)).toEqual([fresh.body.id]);
    expect((await createVessel(body, key, token).expect(201)).headers['idempotent-replayed']).toBe('true');
    expect(await t.database.prisma.idempotencyKey.count({ where: { key } })).toBe(1);
  });
});

describe('Idempotency-Key: a request that waits longer than IDEMPOTENCY_WAIT_SECONDS', () => {
  let t: TestApp;
  let cast: Cast;
  beforeAll(async () => {
    t = await startTestApp({ IDEMPOTENCY_WAIT_SECONDS: '1' });
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  it('is refused with 409 idempotency-key-in-use and Retry-After, and writes nothing', async () => {
    const key = randomUUID();
    const body = {
      labId: cast.lab.id,
      assetTag: nextTag(),
      kind: 'one-mark-pipette',
      nominalVolumeMl: '25',
      accuracyClass: 'A',
      material: 'borosilicate-3-3',
    };
    const holder = new Client({ connectionString: t.testDatabase.appUrl });
    await holder.connect();
    try {
      await holder.query('BEGIN');
      await holder.query(
        `INSERT INTO idempotency_keys (caller_kind, caller_id, idempotency_key, request_method, request_path, request_hash, created_at, expires_at)
         VALUES ('person', $1, $2, 'POST', '/v1/vessels', sha256('held'), now(), now() + interval '1 hour')`,
        [cast.people.manager.id, key],
      );
      const started = Date.now();
      const res = await t.http.post('/v1/vessels').set(bearer(cast.tokens.manager)).set('idempotency-key', key).send(body).expect(409);
      expect(Date.now() - started).toBeGreaterThanOrEqual(900);
      expect(res.headers['retry-after']).toBe('1');
      expect(res.body).toMatchObject({ code: 'idempotency-key-in-use', errors: [{ field: 'Idempotency-Key' }] });
      expect(await t.database.prisma.vessel.count({ where: { assetTag: body.assetTag } })).toBe(0);
    } finally {
      await holder.query('ROLLBACK');
      await holder.end();
    }
  });
});
