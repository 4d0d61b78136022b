import type { Response } from 'supertest';

import { newSessionToken } from '../../apps/api/src/auth/tokens';
import { CSV_BODY_LIMIT_BYTES } from '../../apps/api/src/inventory/csv-body';
import { TEST_WEBHOOK_KEY } from '../delivery/delivery-support';
import { Raw, toJsonText } from '../registry/hostile-input.arbitraries';
import { buildWorld, type World } from '../registry/authorization-world';
import { bearer, seedCredential, seedPerson, sessionFor } from '../support/factories';
import { startTestApp } from '../support/test-app';
import { tableSnapshot } from './fuzz-world';
import { type JsonSchema, type OpenApiDocument, type Operation, operationsOf, SchemaArbitraries } from './openapi-arbitraries';

/*
 * The edges of access the authorization matrix does not spell out, over every
 * documented operation: tokens that are expired, idle, signed out, malformed,
 * of a disabled person, or keys that are revoked or forged; another person's
 * factor asked for by every way of naming the person and the vessel, by a
 * colleague and by a credential of another lab; and requests too large or too
 * odd to be read (page sizes over the maximum, bodies over the limit, deep
 * nesting, decimal members holding NaN, 1e309 and the like).
 */

const BODY_LIMIT = 65_536;
const PROBLEM = /^application\/problem\+json/;
/**
 * Documented as taking JSON, but reads the uploaded file's own bytes and answers JSON with 415 before
 * parsing it: left out of the JSON-parsing checks (the document's content type is the exports feature's).
 */
const FILE_UPLOADS = new Set(['POST /v1/exports/verification/file']);
const readsJson = (op: Operation) => op.contentType === 'application/json' && !FILE_UPLOADS.has(op.route);

describe('access at the edges', () => {
  let w: World;
  let doc: OpenApiDocument;
  let ops: Operation[];
  const tokens = { admin: '', analyst: '', manager: '' };

  beforeAll(async () => {
    w = await buildWorld(await startTestApp({ WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY, BODY_LIMIT_BYTES: String(BODY_LIMIT) }));
    doc = (await w.t.http.get('/openapi.json').expect(200)).body as OpenApiDocument;
    ops = operationsOf(doc);
    for (const caller of ['admin', 'analyst', 'manager'] as const) tokens[caller] = (await w.tokenFor(caller, false)) as string;
  }, 60_000);
  afterAll(() => w.t.close());

  /** An object of lab A for each path parameter, by its name. */
  const idFor = (name: string): string =>
    ({
      labId: w.labA,
      personId: w.people.analyst.id,
      balanceId: w.items.checked.id,
      checkId: w.items.check.id,
      instrumentId: w.items.instrument.id,
      credentialId: w.items.credential.id,
      code: 'not-found',
    })[name] ?? w.items.vessel.id;
  const urlOf = (op: Operation) => op.template.replace(/\{(\w+)\}/g, (_m, name: string) => idFor(name));
  const secured = () => ops.filter((op) => (doc.paths[op.template]?.[op.method.toLowerCase()]?.security ?? []).length > 0);

  async function send(op: Operation, authorization: string | null, text?: string, contentType = 'application/json'): Promise<Response> {
    let req = w.t.http[op.method.toLowerCase() as 'get'](urlOf(op));
    if (authorization !== null) req = req.set('authorization', authorization);
    if (op.ifMatch) req = req.set('if-match', '"v1"');
    if (text !== undefined) return req.set('content-type', contentType).send(text);
    return op.body ? req.send({}) : req;
  }

  describe('who is asking', () => {
    /** A session of the administrator that ended: past its absolute expiry, or idle too long. */
    async function endedSession(kind: 'expired' | 'idle'): Promise<string> {
      const { token, hash } = newSessionToken();
      const now = Date.now();
      await w.prisma.session.create({
        data: {
          personId: w.people.admin.id,
          tokenHash: hash,
          createdAt: new Date(now - (kind === 'expired' ? 12 * 3_600_000 : 3_600_000)),
          lastSeenAt: new Date(now - (kind === 'expired' ? 60_000 : 31 * 60_000)),
          expiresAt: new Date(now + (kind === 'expired' ? -1_000 : 3_600_000)),
        },
      });
      return token;
    }

    /** Bearer values that must each be refused with 401 on every route that needs a caller. */
    async function refusedValues(): Promise<Record<string, string>> {
      const signedOut = await sessionFor(w.prisma, w.people.admin.id);
      await w.t.http.delete('/v1/sessions/current').set(bearer(signedOut)).expect(204);
      const disabled = await seedPerson(w.prisma, { displayName: 'Disabled Admin', registryRole: 'administrator' });
      const disabledToken = await sessionFor(w.prisma, disabled.id);
      await w.t.http.get('/v1/me').set(bearer(disabledToken)).expect(200);
      const version = (await w.prisma.person.findUniqueOrThrow({ where: { id: disabled.id } })).version;
      await w.t.http
        .patch(`/v1/people/${disabled.id}`)
        .set(bearer(await sessionFor(w.prisma, w.people.admin.id)))
        .set('if-match', `"v${version}"`)
        .send({ status: 'disabled' })
        .expect(200);
      const revoked = await seedCredential(w.prisma, w.people.admin.id, [
        'factors:read',
        'inventory:read',
        'calculations:run',
        'corrections:write',
      ]);
      await w.prisma.serviceCredential.update({ where: { id: revoked.credential.id }, data: { revokedAt: new Date() } });
      const live = await seedCredential(w.prisma, w.people.admin.id, [
        'factors:read',
        'inventory:read',
        'calculations:run',
        'corrections:write',
      ]);
      const [keyId, secret] = live.key.split('.') as [string, string];
      const realSession = await sessionFor(w.prisma, w.people.admin.id);
      return {
        'session past its absolute expiry': `Bearer ${await endedSession('expired')}`,
        'session idle too long': `Bearer ${await endedSession('idle')}`,
        'signed-out session': `Bearer ${signedOut}`,
        'session of a disabled person': `Bearer ${disabledToken}`,
        'revoked credential': `Bearer ${revoked.key}`,
        'credential with a forged secret': `Bearer ${keyId}.${secret.slice(0, -1)}${secret.endsWith('A') ? 'B' : 'A'}`,
        'credential with an unknown key id': `Bearer rk_0123456789abcdef.${secret}`,
        'session token one character short': `Bearer ${realSession.slice(0, -1)}`,
        'session token with a character changed': `Bearer ${realSession.slice(0, -1)}${realSession.endsWith('A') ? 'B' : 'A'}`,
        'two tokens': `Bearer ${realSession} ${realSession}`,
        'basic credentials': `Basic ${Buffer.from(`${w.people.admin.email}:secret`).toString('base64')}`,
        'an empty bearer': 'Bearer ',
        'a token of another shape': 'Bearer eyJhbGciOiJub25lIn0.eyJzdWIiOiJhZG1pbiJ9.',
        'an overlong token': `Bearer rs_${'A'.repeat(4_000)}`,
        'SQL in the token': "Bearer rs_' OR '1'='1",
      };
    }

    it('refuses every route that needs a caller with 401 problem details for ended, foreign and malformed tokens, and changes nothing', async () => {
      const values = await refusedValues();
      const routes = secured();
      expect(routes.length).toBeGreaterThan(80);
      const before = await tableSnapshot(w.t);
      const wrong: string[] = [];
      for (const [what, authorization] of Object.entries(values)) {
        for (let i = 0; i < routes.length; i += 10) {
          await Promise.all(
            routes.slice(i, i + 10).map(async (op) => {
              const res = await send(op, authorization);
              const ok =
                res.status === 401 &&
                PROBLEM.test(String(res.headers['content-type'])) &&
                res.body.code === 'unauthenticated' &&
                /^Bearer/.test(String(res.headers['www-authenticate']));
              if (!ok) wrong.push(`${what}: ${op.route} answered ${res.status} ${res.body?.code}`);
            }),
          );
        }
      }
      expect(wrong).toEqual([]);
      const after = await tableSnapshot(w.t);
      expect(Object.keys(before).filter((k) => before[k] !== after[k])).toEqual([]);
    }, 120_000);

    it('refuses to delete a person who has sessions, so no session outlives its person', async () => {
      const person = await seedPerson(w.prisma, { displayName: 'Soon Gone' });
      const token = await sessionFor(w.prisma, person.id);
      await expect(w.prisma.$executeRaw`DELETE FROM people WHERE id = ${person.id}::uuid`).rejects.toThrow(/foreign key|permission denied/);
      await w.t.http.get('/v1/me').set(bearer(token)).expect(200);
    });
  });

  describe('another person’s factor', () => {
    /** Every way of naming the colleague and the vessel their factor is for. */
    async function identifierForms(): Promise<Record<string, string | undefined>[]> {
      await w.prisma.labMembership.updateMany({
        where: { personId: w.people.colleague.id, labId: w.labA },
        data: { externalRef: 'DW-ANA-42' },
      });
      const person = [
        { personId: w.people.colleague.id },
        { email: w.people.colleague.email },
        { email: w.people.colleague.email.toUpperCase() },
        { externalRef: 'DW-ANA-42' },
      ];
      const vessel = [{ vesselId: w.items.factorVessel.id }, { assetTag: w.items.factorVessel.assetTag }];
      return person.flatMap((p) => vessel.map((v) => ({ ...p, ...v })));
    }

    it('is not found for a colleague in the same lab or a credential of another lab, however it is named', async () => {
      const forms = await identifierForms();
      const otherLab = (await seedCredential(w.prisma, w.people.admin.id, ['factors:read', 'corrections:write'], [w.labB])).key;
      const sameLab = (await seedCredential(w.prisma, w.people.admin.id, ['factors:read', 'corrections:write'], [w.labA])).key;
      const seen: string[] = [];
      for (const form of forms) {
        for (const [who, token, expected] of [
          ['the colleague’s lab-mate', tokens.analyst, 404],
          ['a credential of lab B', otherLab, 404],
          ['a credential of lab A', sameLab, 200],
          ['the lab’s manager', tokens.manager, 200],
        ] as const) {
          const lookup = await w.t.http.get('/v1/factors/current').query(form).set(bearer(token));
          const correction = await w.t.http
            .post('/v1/factors/corrections')
            .set(bearer(token))
            .send({ ...form, indicatedVolumeMl: '25' });
          seen.push(`${who} ${JSON.stringify(form)}: ${lookup.status} ${correction.status}`);
          expect(`${who} ${JSON.stringify(form)}: ${lookup.status} ${correction.status}`).toBe(
            `${who} ${JSON.stringify(form)}: ${expected} ${expected}`,
          );
          if (expected === 404) {
            expect(lookup.headers['content-type']).toMatch(PROBLEM);
            expect(lookup.text).not.toContain(w.items.colleagueFactor.id);
          } else {
            expect(lookup.body.factorId).toBe(w.items.colleagueFactor.id);
          }
        }
      }
      expect(seen).toHaveLength(forms.length * 4);
    });

    it('is not found by its id, and not listed, for a lab-mate or a credential of another lab', async () => {
      const otherLab = (await seedCredential(w.prisma, w.people.admin.id, ['factors:read'], [w.labB])).key;
      for (const token of [tokens.analyst, otherLab]) {
        await w.t.http.get(`/v1/factors/${w.items.colleagueFactor.id}`).set(bearer(token)).expect(404);
        for (const query of [{}, { personId: w.people.colleague.id }, { vesselId: w.items.factorVessel.id }, { labId: w.labA }]) {
          const list = await w.t.http.get('/v1/factors').query(query).set(bearer(token));
          expect([200, 404]).toContain(list.status);
          expect(list.text).not.toContain(w.items.colleagueFactor.id);
        }
      }
    });
  });

  describe('requests too large or too odd to read', () => {
    const lists = () => ops.filter((op) => op.method === 'GET' && op.queryParams.some((p) => p.name === 'limit'));

    it('refuses a page size over each list’s maximum with 400 naming limit, and serves the maximum', async () => {
      expect(lists().length).toBeGreaterThan(15);
      for (const op of lists()) {
        const max = op.queryParams.find((p) => p.name === 'limit')?.schema?.maximum;
        expect({ route: op.route, max }).toEqual({ route: op.route, max: expect.any(Number) });
        for (const limit of [String((max as number) + 1), '1000000', '1e309', 'NaN', '-0', '0', '-1', '2.5']) {
          const res = await w.t.http.get(urlOf(op)).query({ limit }).set(bearer(tokens.admin));
          expect({ route: op.route, limit, status: res.status, fields: fieldsOf(res) }).toEqual({
            route: op.route,
            limit,
            status: 400,
            fields: ['limit'],
          });
        }
        const full = await w.t.http
          .get(urlOf(op))
          .query({ limit: String(max) })
          .set(bearer(tokens.admin));
        expect({ route: op.route, status: full.status }).toEqual({ route: op.route, status: 200 });
      }
    });

    it('answers a body over the limit with 413 problem details on every operation that takes one', async () => {
      const takers = ops.filter((op) => op.contentType !== null);
      expect(takers.length).toBeGreaterThan(30);
      const json = toJsonText({ padding: 'x'.repeat(BODY_LIMIT) });
      for (const op of takers.filter((o) => o.contentType === 'application/json')) {
        const res = await send(op, `Bearer ${tokens.admin}`, json);
        expect({ route: op.route, status: res.status, code: res.body?.code, type: res.headers['content-type'] }).toEqual({
          route: op.route,
          status: 413,
          code: 'payload-too-large',
          type: expect.stringMatching(PROBLEM),
        });
      }
    });

    it('answers a CSV import over its own limit with 413 problem details', async () => {
      const row = 'PIP-25-X01,one-mark-pipette,25,A,borosilicate-3-3\r\n';
      const csv = `assetTag,kind,nominalVolumeMl,accuracyClass,material\r\n${row.repeat(Math.ceil(CSV_BODY_LIMIT_BYTES / row.length) + 1)}`;
      const res = await w.t.http
        .post('/v1/vessels/import')
        .query({ labId: w.labA })
        .set(bearer(tokens.admin))
        .set('content-type', 'text/csv')
        .send(csv);
      expect({ status: res.status, code: res.body?.code, type: res.headers['content-type'] }).toEqual({
        status: 413,
        code: 'payload-too-large',
        type: expect.stringMatching(PROBLEM),
      });
      expect(await w.prisma.vessel.count({ where: { assetTag: 'PIP-25-X01' } })).toBe(0);
    });

    // Within the body limit (a deeper body is a 413 first).
    it('refuses deeply nested JSON with 400 problem details on every operation that takes JSON', async () => {
      const deep = [
        new Raw(`${'{"a":'.repeat(8_000)}1${'}'.repeat(8_000)}`),
        new Raw(`${'['.repeat(20_000)}1${']'.repeat(20_000)}`),
        new Raw(`{"labId":${'['.repeat(5_000)}${']'.repeat(5_000)}}`),
      ];
      for (const op of ops.filter((o) => readsJson(o))) {
        for (const body of deep) {
          const res = await send(op, `Bearer ${tokens.admin}`, toJsonText(body));
          expect({ route: op.route, status: res.status, type: res.headers['content-type'] }).toEqual({
            route: op.route,
            status: 400,
            type: expect.stringMatching(PROBLEM),
          });
        }
      }
    });

    it('refuses NaN, infinities and huge exponents in every decimal member with 400 naming it', async () => {
      const arbs = new SchemaArbitraries(doc, { byName: {}, any: [] });
      const cases: string[] = [];
      for (const op of ops.filter((o) => readsJson(o))) {
        // The documented example where there is one; otherwise the other members are missing, which is refused too.
        const example = (op.examples[0] ?? {}) as Record<string, unknown>;
        for (const path of decimalMembers(arbs, op.body as JsonSchema)) {
          const values = [
            'NaN',
            'Infinity',
            '-Infinity',
            '1e309',
            '-1e309',
            '1e99999',
            '1e9999',
            '1e-9999',
            new Raw('1e309'),
            new Raw('-1e400'),
          ];
          const member = path.join('.');
          const answers = await Promise.all(
            values.map(async (value) => {
              const res = await send(op, `Bearer ${tokens.admin}`, toJsonText(setPath(example, path, value) as never));
              return {
                value: value instanceof Raw ? `raw ${value.text}` : value,
                status: res.status,
                named: fieldsOf(res).includes(member),
              };
            }),
          );
          cases.push(op.route);
          expect({ route: op.route, member, answers }).toEqual({
            route: op.route,
            member,
            answers: answers.map((a) => ({ value: a.value, status: 400, named: true })),
          });
          // Negative zero is zero: accepted or refused like 0, never a server error.
          const zero = await send(op, `Bearer ${tokens.admin}`, toJsonText(setPath(example, path, '-0') as never));
          expect(zero.status).toBeLessThan(500);
        }
      }
      expect(new Set(cases).size).toBeGreaterThan(8);
    });
  });
});

/** The fields a validation refusal names. */
function fieldsOf(res: Response): string[] {
  return ((res.body?.errors ?? []) as { field: string }[]).map((e) => e.field);
}

/** Paths of the members (in nested objects too) documented as decimals: a number or a decimal string. */
function decimalMembers(arbs: SchemaArbitraries, schema: JsonSchema, prefix: string[] = [], depth = 0): string[][] {
  const s = arbs.resolve(schema);
  const variants = s.properties ? [s] : (s.oneOf ?? s.anyOf ?? []).map((o) => arbs.resolve(o)).filter((o) => o.properties);
  if (depth > 3) return [];
  const seen = new Set<string>();
  return variants.flatMap((v) =>
    Object.entries(v.properties ?? {}).flatMap(([key, member]) => {
      const m = arbs.resolve(member);
      const options = m.anyOf ?? [];
      const decimal = options.some((o) => o.type === 'number') && options.some((o) => o.type === 'string' && o.pattern);
      const paths = decimal ? [[...prefix, key]] : decimalMembers(arbs, m, [...prefix, key], depth + 1);
      return paths.filter((p) => !seen.has(p.join('.')) && seen.add(p.join('.')));
    }),
  );
}

function setPath(root: unknown, path: string[], value: unknown): unknown {
  if (path.length === 0) return value;
  const [head, ...rest] = path as [string, ...string[]];
  const obj = (root && typeof root === 'object' ? root : {}) as Record<string, unknown>;
  return { ...obj, [head]: setPath(obj[head], rest, value) };
}
