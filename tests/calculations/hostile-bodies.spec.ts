import fc from 'fast-check';

import { EXAMPLES } from '../../apps/api/src/calculations/calculations.examples';
import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, PLAIN_DECIMAL, PROBLEM, quantityMembers, signedIn } from './helpers';

/** A valid body per endpoint to start mutating from. */
const SEEDS: Record<string, unknown> = {
  'water-density': EXAMPLES.waterDensity.demo.value,
  'air-density': EXAMPLES.airDensity.demo.value,
  'z-factor': EXAMPLES.zFactor.demo.value,
  'gravimetric-volume': EXAMPLES.gravimetricVolume.pipette.value,
  buoyancy: EXAMPLES.buoyancy.demo.value,
  'conventional-mass': EXAMPLES.conventionalMass.demo.value,
  'balance-check': EXAMPLES.balanceCheck.demo.value,
};

/** Values that have broken number handling elsewhere: edges of binary64, of the quantity rule, of the methods. */
const EDGES = [
  null,
  true,
  0,
  -0,
  -1,
  1e308,
  -1e308,
  5e-324,
  1e15,
  1e-16,
  '',
  ' ',
  'NaN',
  'Infinity',
  '-Infinity',
  '1e309',
  '1e-400',
  '0',
  '-0',
  '1e14',
  '-1e14',
  '9.99e14',
  '1e-15',
  '-1e-15',
  '99999999999999.9',
  '40',
  '40.0000000001',
  '-273.15',
  '-273.16',
  '0.5',
  '0.9',
  '1',
  '1e-3',
  '8000',
  'x',
  '20,5',
  '1.2.3',
  '--1',
  [],
  {},
  [[]],
  ['1'],
  'a'.repeat(41),
];
const hostile: fc.Arbitrary<Json> = fc.oneof(
  fc.constantFrom(...EDGES),
  fc.double(),
  fc.integer(),
  fc.string({ maxLength: 45 }),
  fc.jsonValue({ maxDepth: 2 }) as fc.Arbitrary<Json>,
);

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

/** Every path into a JSON value (object keys and array indexes). */
function paths(v: Json, prefix: (string | number)[] = []): (string | number)[][] {
  if (Array.isArray(v)) return [prefix, ...v.flatMap((x, i) => paths(x, [...prefix, i]))];
  if (v && typeof v === 'object') return [prefix, ...Object.entries(v).flatMap(([k, x]) => paths(x, [...prefix, k]))];
  return [prefix];
}

type How = 'replace' | 'remove' | 'extra';

/** Replaces or deletes the value at `path`, or adds an unknown member to the object there; skips a path that is gone. */
function mutate(body: Json, [path, value, how]: [(string | number)[], Json, How]): Json {
  if (path.length === 0) return how === 'replace' ? value : body;
  const copy = structuredClone(body);
  let parent: Json = copy;
  for (const key of path.slice(0, -1)) {
    if (!parent || typeof parent !== 'object') return copy;
    parent = (parent as Record<string | number, Json>)[key] ?? null;
  }
  if (!parent || typeof parent !== 'object') return copy;
  const holder = parent as Record<string | number, Json>;
  const last = path[path.length - 1] as string | number;
  const target = holder[last];
  if (how === 'remove') delete holder[last];
  else if (how === 'extra' && target && typeof target === 'object' && !Array.isArray(target))
    (target as Record<string, Json>).unexpected = value;
  else holder[last] = value;
  return copy;
}

const how = fc.constantFrom<How>('replace', 'replace', 'remove', 'extra');
/** One to three mutations of a valid body, or now and then a random JSON value. */
const bodyFor = (seed: Json) =>
  fc.oneof(
    {
      weight: 8,
      arbitrary: fc
        .array(fc.tuple(fc.constantFrom(...paths(seed)), hostile, how), { minLength: 1, maxLength: 3 })
        .map((ms) => ms.reduce(mutate, seed)),
    },
    { weight: 1, arbitrary: fc.jsonValue({ maxDepth: 3 }) as fc.Arbitrary<Json> },
  );

describe('hostile bodies to the calculation endpoints', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  it.each(Object.keys(SEEDS))('POST /v1/calculations/%s answers 200, 400 or 422 problem+json, never 500', async (endpoint) => {
    const seed = SEEDS[endpoint] as Json;
    await fc.assert(
      fc.asyncProperty(fc.oneof(bodyFor(seed), fc.constant(seed)), async (body) => {
        const res = await c.post(endpoint, body);
        if (res.status === 200) {
          expect(JSON.stringify(res.body)).not.toMatch(/NaN|Infinity/);
          const notPlain = quantityMembers(res.body).filter(
            (m) => m.value !== null && !(typeof m.value === 'string' && PLAIN_DECIMAL.test(m.value)),
          );
          expect({ body, notPlain }).toEqual({ body, notPlain: [] });
          return;
        }
        if (res.status !== 400 && res.status !== 422) {
          throw new Error(`${res.status} for ${JSON.stringify(body)}: ${JSON.stringify(res.body)}`);
        }
        expect(res.headers['content-type']).toMatch(PROBLEM);
        expect(res.body.errors?.length).toBeGreaterThan(0);
      }),
      { numRuns: 80 },
    );
  });
});
