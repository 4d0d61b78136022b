import fc from 'fast-check';

import { TEST_WEBHOOK_KEY } from '../delivery/delivery-support';
import { Big, type Hostile, hostileQueryValue, textOf, toJsonText } from '../registry/hostile-input.arbitraries';
import { bearer } from '../support/factories';
import { startTestApp } from '../support/test-app';
import { withRegisteredRoutes } from '../support/registered-routes';
import { type FuzzWorld, fuzzWorld, tableSnapshot } from './fuzz-world';
import { type JsonSchema, mutated, type Operation, operationsOf, SchemaArbitraries } from './openapi-arbitraries';

/*
 * Every operation of the service's OpenAPI document, called with values
 * derived from its documented schemas: valid-ish ones (right types, formats
 * and ranges, identifiers of real objects) and hostile mutations (wrong types,
 * huge strings, control characters, "NaN", "1e309", "-0", deep nesting,
 * unknown members, arrays of 100,000 items, path parameters that are not
 * identifiers), once as an administrator and once with a service credential
 * holding every scope. Whatever is sent: no 5xx; a 4xx is a problem document,
 * a 400 for invalid fields names them, and a refused request changes no table;
 * every answer comes within the time bound.
 *
 * Deterministic: FUZZ_SEED (default below) and FUZZ_RUNS runs per operation
 * and caller (3 here; `npm run test:fuzz` runs 60). FUZZ_MAX_MS sets the bound.
 */

const RUNS = Number(process.env.FUZZ_RUNS ?? 3);
const SEED = Number(process.env.FUZZ_SEED ?? 20_261_205);
const MAX_MS = Number(process.env.FUZZ_MAX_MS ?? 1_000);
const PROBLEM = /^application\/problem\+json/;
/** Tables a refused call of these operations writes on purpose: a failed password is counted and audited. */
const REFUSAL_WRITES: Record<string, readonly string[]> = {
  'POST /v1/sessions': ['sign_in_failures', 'audit_entries'],
  'POST /v1/me/password': ['sign_in_failures', 'audit_entries'],
};
/** Operations that end the caller's own session when they succeed: called with a new administrator each time. */
const ENDS_SESSION = new Set(['DELETE /v1/sessions/current', 'POST /v1/me/password']);
const CALLERS = ['admin', 'credential'] as const;
type Caller = (typeof CALLERS)[number];

const HOSTILE_PATH = [
  'not-a-uuid',
  "'; DROP TABLE vessels; --",
  '00000000-0000-0000-0000-000000000000',
  '3F6C2A5E-8D1B-4C7A-9E0F-1A2B3C4D5E6F',
  '1e309',
  'NaN',
  '-0',
  '..%2F..%2Fadmin',
  'A'.repeat(101),
  '١٢٣',
  'null',
];

interface Built {
  readonly url: string;
  readonly ifMatch?: string;
  readonly text?: string;
  readonly contentType?: string;
  /** Body or query members given hostile values (the field a 400 should name). */
  readonly mutatedPaths: readonly string[];
  /** Everything else is valid: a validation refusal must name the mutated member. */
  readonly strict?: boolean;
}

/** Requests of one operation: path, query, If-Match and body, each valid-ish or hostile. */
function requests(op: Operation, arbs: SchemaArbitraries, w: FuzzWorld): fc.Arbitrary<Built> {
  const param = (name: string, schema: JsonSchema | undefined) =>
    fc.oneof(
      { weight: 5, arbitrary: arbs.valid(schema ?? { type: 'string', format: 'uuid' }, name).map(String) },
      { weight: 1, arbitrary: fc.constantFrom(...HOSTILE_PATH) },
      { weight: 1, arbitrary: fc.string({ minLength: 1, maxLength: 30 }) },
    );
  const path = fc
    .tuple(...op.pathParams.map((p) => param(p.name, p.schema)))
    .map((values) => op.template.replace(/\{(\w+)\}/g, () => encodeURIComponent(values.shift() ?? '')));

  // A cursor is only valid as the service wrote it: valid-ish queries leave it out, hostile ones forge it.
  const documented = op.queryParams.filter((p) => p.name !== 'cursor');
  const validQuery = fc.record(Object.fromEntries(documented.map((p) => [p.name, arbs.valid(p.schema ?? {}, p.name).map(queryText)])), {
    requiredKeys: op.queryParams.filter((p) => p.required).map((p) => p.name),
  });
  const queryKey = fc.oneof(
    ...(op.queryParams.length ? [fc.constantFrom(...op.queryParams.map((p) => p.name))] : []),
    fc.constantFrom('limit', 'cursor', 'unknownMember', '__proto__'),
  );
  const query = fc.oneof(
    { weight: 2, arbitrary: validQuery.map((q) => ({ q: q as Record<string, string | Big>, mutatedPaths: [] as string[] })) },
    {
      weight: 1,
      arbitrary: fc
        .tuple(
          validQuery,
          fc.array(fc.tuple(queryKey, fc.oneof(hostileQueryValue, fc.constantFrom('NaN', '1e309', '-0', '100000'))), {
            minLength: 1,
            maxLength: 2,
          }),
        )
        .map(([q, changes]) => {
          const out: Record<string, string | Big> = { ...(q as Record<string, string>) };
          for (const [k, v] of changes) Object.defineProperty(out, k, { value: v, enumerable: true, configurable: true, writable: true });
          return { q: out, mutatedPaths: changes.map(([k]) => k) };
        }),
    },
  );

  const body = bodies(op, arbs, w);
  const ifMatch = op.ifMatch
    ? fc.option(fc.constantFrom('"v1"', '"v2"', '"v3"', '*', 'v1', '"v1e309"'), { nil: undefined })
    : fc.constant(undefined);

  return fc.tuple(path, query, body, ifMatch).map(([p, q, b, m]): Built => {
    const qs = Object.entries(q.q)
      .map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(wellFormed(textOf(v)))}`)
      .join('&');
    return {
      url: qs ? `${p}?${qs}` : p,
      ...(m ? { ifMatch: m } : {}),
      ...(b ? { text: b.text, contentType: b.contentType } : {}),
      mutatedPaths: [...q.mutatedPaths, ...(b?.mutatedPaths ?? [])],
    };
  });
}

function bodies(
  op: Operation,
  arbs: SchemaArbitraries,
  w: FuzzWorld,
): fc.Arbitrary<{ text: string; contentType: string; mutatedPaths: readonly string[] } | null> {
  if (op.contentType === 'text/csv') {
    const row = fc.constantFrom('VF-100-F01,volumetric-flask,100,A,borosilicate-3-3', 'x,y', '"a,b",1e309,NaN,-0', ',,,,', '\u0000,\ufeff');
    return fc.array(row, { maxLength: 4 }).map((rows) => ({
      text: ['assetTag,kind,nominalVolumeMl,accuracyClass,material', ...rows].join('\r\n'),
      contentType: 'text/csv',
      mutatedPaths: [],
    }));
  }
  if (!op.body) return fc.constant(null);
  const fromSchema = arbs.valid(op.body);
  const examples = op.examples.map((e) => withRealIds(e, w));
  const valid = examples.length
    ? fc.oneof({ weight: 1, arbitrary: fromSchema }, { weight: 2, arbitrary: fc.constantFrom(...examples) })
    : fromSchema;
  const contentType = op.contentType ?? 'application/json';
  return fc.oneof(
    { weight: 1, arbitrary: valid.map((v) => ({ text: JSON.stringify(v), contentType, mutatedPaths: [] as string[] })) },
    { weight: 2, arbitrary: mutated(valid).map((m) => ({ text: toJsonText(m.value), contentType, mutatedPaths: m.paths })) },
  );
}

/** The documented example with each identifier replaced by a real object's, chosen by the member's name. */
function withRealIds(example: unknown, w: FuzzWorld, name = ''): unknown {
  if (Array.isArray(example)) return example.map((x) => withRealIds(x, w, name));
  if (example && typeof example === 'object') {
    return Object.fromEntries(Object.entries(example).map(([k, v]) => [k, withRealIds(v, w, k)]));
  }
  if (typeof example === 'string' && /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(example)) {
    return (w.ids.byName[name] ?? w.ids.any)[0];
  }
  return example;
}

const queryText = (v: unknown): string | Big => (v instanceof Big ? v : Array.isArray(v) ? v.join(',') : String(v));
/** A URL carries UTF-8: a lone surrogate cannot be sent. */
const wellFormed = (s: string): string => s.replace(/[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/g, '\ufffd');
/** A field named in a refusal relates to a mutated member when one lies on the other's path. */
const related = (field: string, path: string) =>
  field === '(body)' || path === '(body)' || field.startsWith(path) || path.startsWith(field);
const seedOf = (route: string) => [...route].reduce((h, c) => (h * 31 + c.charCodeAt(0)) | 0, SEED);

describe('fuzzing every documented operation', () => {
  let w: FuzzWorld;
  let ops: Operation[] = [];
  let arbs: SchemaArbitraries;
  const slowest = { ms: 0, what: '' };
  /** Every status answered, by caller and operation. */
  const statuses = new Map<string, number[]>();

  /** Every route Fastify registered (collected as the app starts), to hold the document to. */
  let appRoutes: ReadonlySet<string> = new Set();

  beforeAll(async () => {
    const started = await withRegisteredRoutes(() => startTestApp({ WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY }));
    appRoutes = started.routes;
    w = await fuzzWorld(started.result);
    const doc = await w.openApi();
    ops = operationsOf(doc);
    arbs = new SchemaArbitraries(doc, w.ids);
  }, 60_000);
  afterAll(async () => {
    if (process.env.FUZZ_REPORT) {
      const all = [...statuses.values()].flat();
      const counts = new Map<number, number>();
      for (const s of all) counts.set(s, (counts.get(s) ?? 0) + 1);
      const tally = [...counts].sort(([a], [b]) => a - b).map(([s, n]) => `${s}: ${n}`);
      const succeeded = [...statuses].filter(([k, v]) => k.startsWith('admin') && v.some((s) => s < 400)).length;
      console.log(
        `${all.length} requests (${tally.join(', ')}); ${succeeded} operations answered the administrator with a success; slowest answer ${Math.round(slowest.ms)} ms (${slowest.what})`,
      );
    }
    await w.t.close();
  });

  it('finds every route of the application in the document, so every route is fuzzed', () => {
    // Not API operations: the interactive docs' pages, the document itself and the metrics scrape.
    const undocumented = /^GET \/(docs(\/|$)|openapi\.(json|yaml)$|metrics$)/;
    const documented = new Set(ops.map((o) => o.route));
    const missing = [...appRoutes].filter((r) => !undocumented.test(r) && !documented.has(r)).sort();
    expect({ missing }).toEqual({ missing: [] });
    expect(ops.length).toBeGreaterThan(80);
    expect(appRoutes.size).toBeGreaterThanOrEqual(ops.length);
  });

  async function judged(op: Operation, caller: Caller, sent: Built): Promise<void> {
    const token = caller === 'admin' ? (ENDS_SESSION.has(op.route) ? await w.throwawayAdmin() : w.tokens.admin) : w.tokens.credential;
    const before = await tableSnapshot(w.t);
    let req = w.t.http[op.method.toLowerCase() as 'get'](sent.url).set(bearer(token));
    if (sent.ifMatch) req = req.set('if-match', sent.ifMatch);
    const started = performance.now();
    const res = await (sent.text === undefined ? req : req.set('content-type', sent.contentType ?? 'application/json').send(sent.text));
    const ms = performance.now() - started;
    const after = await tableSnapshot(w.t);
    const what = `${caller}: ${op.method} ${sent.url.slice(0, 200)} ${(sent.text ?? '').slice(0, 300)}`;
    if (ms > slowest.ms) Object.assign(slowest, { ms, what: what.slice(0, 120) });
    statuses.set(`${caller} ${op.route}`, [...(statuses.get(`${caller} ${op.route}`) ?? []), res.status]);
    const fail = (why: string) => new Error(`${why}\n  request: ${what}\n  answer: ${res.status} ${String(res.text).slice(0, 400)}`);
    if (res.status >= 500) {
      const logged = w.t.logs.filter((l) => JSON.stringify(l).includes(String(res.headers['x-request-id'])) && Number(l.level) >= 50);
      throw fail(`server error ${JSON.stringify(logged).slice(0, 1_500)}`);
    }
    if (ms > MAX_MS) throw fail(`took ${Math.round(ms)} ms (bound ${MAX_MS} ms)`);
    if (res.status < 400) return;
    if (!PROBLEM.test(String(res.headers['content-type'])) || res.body?.status !== res.status) throw fail('not a problem document');
    const allowed = REFUSAL_WRITES[op.route] ?? [];
    const changed = Object.keys(before).filter((k) => before[k] !== after[k] && !allowed.includes(k));
    if (changed.length) throw fail(`refused, yet changed ${changed.join(', ')}`);
    if (res.body.code === 'validation-failed') {
      const errors = (res.body.errors ?? []) as { field?: unknown; reason?: unknown }[];
      // A field is a path of member names; an unknown member called "" is named "".
      if (!errors.length || errors.some((e) => typeof e.field !== 'string' || typeof e.reason !== 'string')) {
        throw fail('a validation refusal that names no field');
      }
      // One member made hostile and the rest valid (a documented example): the refusal names that member, or
      // a member checked together with it whose reason names it ("is required with limitReason").
      if (sent.strict && sent.mutatedPaths.length === 1) {
        const [path] = sent.mutatedPaths as [string];
        const named = errors.some((e) => related(String(e.field), path) || String(e.reason).includes(path));
        if (!named) throw fail(`names ${errors.map((e) => String(e.field)).join(', ')}, not ${path}`);
      }
    }
  }

  const routes = (): Operation[] => ops;
  // The list of operations comes from the running app; one test per operation would need it at collection time.
  it('answers every operation without a server error, slow answer or write on refusal', async () => {
    for (const op of routes()) {
      for (const caller of CALLERS) {
        await fc.assert(
          fc.asyncProperty(requests(op, arbs, w), (sent) => judged(op, caller, sent)),
          { numRuns: RUNS, seed: seedOf(`${caller} ${op.route}`), endOnFailure: true },
        );
      }
      const me = await w.t.http.get('/v1/me').set(bearer(w.tokens.admin));
      if (me.status !== 200) throw new Error(`after ${op.route} the administrator's session no longer works (${me.status})`);
    }
  }, 600_000);

  it('sends hostile values to every body member of every operation, and each refusal names the member', async () => {
    for (const op of routes().filter((o) => o.body && o.contentType === 'application/json')) {
      const props = Object.keys(arbs.resolve(op.body as JsonSchema).properties ?? {});
      const seed = op.examples[0] !== undefined ? (withRealIds(op.examples[0], w) as Record<string, unknown>) : null;
      if (!seed || typeof seed !== 'object' || Array.isArray(seed)) continue;
      for (const member of props.length ? props : Object.keys(seed)) {
        for (const value of [new Big('9', 100_000), 'NaN', '1e309', [[[[[]]]]], { nested: { deeper: true } }] as Hostile[]) {
          const text = toJsonText({ ...(seed as Record<string, Hostile>), [member]: value });
          const url = op.template.replace(/\{(\w+)\}/g, (_m, name: string) => (w.ids.byName[name] ?? w.ids.any)[0] as string);
          await judged(op, 'admin', { url, text, contentType: 'application/json', ifMatch: '"v1"', mutatedPaths: [member], strict: true });
        }
      }
    }
  }, 600_000);
});
