import fc from 'fast-check';
import type { z } from 'zod';

/*
 * Hostile values for the input schemas, and mutations of a valid request
 * derived from the zod schema it is checked against: each known member may be
 * given a value of the wrong kind, removed, or joined by unknown members.
 */

/**
 * JSON text sent as is: number tokens JSON.stringify cannot write (NaN, Infinity) or would
 * normalise (-0, 1e309), and nesting deeper than JSON.stringify can go.
 */
export class Raw {
  constructor(readonly text: string) {}
}
/** A long repeated text, shown shortly in fast-check's reports. */
export class Big {
  constructor(
    readonly unit: string,
    readonly times: number,
  ) {}
  get text(): string {
    return this.unit.repeat(this.times);
  }
  [fc.toStringMethod](): string {
    return `${JSON.stringify(this.unit)}×${this.times}`;
  }
}
export type Hostile = null | boolean | number | string | Raw | Big | Hostile[] | { [key: string]: Hostile };
/** The text of a value that may be Big. */
export const textOf = (v: string | Big): string => (v instanceof Big ? v.text : v);

const HUGE = 100_000;
export const SQL = ["'; DROP TABLE vessels; --", "' OR '1'='1", '1; SELECT pg_sleep(3)--', '" OR ""="', "\\'; TRUNCATE audit_entries; --"];
export const CONTROL = ['\u0000', 'a\u0000b', '\u0007bell', '\u001b[31m', '\u202eevil', '\ud800', '\ufeff', 'line\u2028break', '\u0085'];
const NOT_QUITE = ['', ' ', '\t\n', 'x', 'null', 'undefined', 'true', '0', '-1', '1e309', 'NaN', 'Infinity', '0x10', '1,5', '١٢٣', '𝟙𝟚𝟛'];
const INJECTION = ['../../etc/passwd', '<script>alert(1)</script>', '{{7*7}}', '${7*7}', 'Ω≈ç√∫'];
const IDS_AND_DATES = [
  '00000000-0000-0000-0000-000000000000',
  '3F6C2A5E-8D1B-4C7A-9E0F-1A2B3C4D5E6F',
  '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6',
  '2026-02-30',
  '0000-01-01',
  '9999-12-31T23:59:59+14:00',
  '-271821-04-20T00:00:00Z',
];
const strings: string[] = [...NOT_QUITE, ...INJECTION, ...IDS_AND_DATES, ...SQL, ...CONTROL];
const hugeStrings = [new Big('A', HUGE), new Big('9', HUGE), new Big('é', HUGE), new Big('1e5', HUGE / 3), new Big('\u0000', HUGE)];
const RAW_NUMBERS = ['NaN', 'Infinity', '-Infinity', '-0', '1e309', '-1e309', '1e-400', '123456789012345678901234567890', '0.1e+99999'];
export const rawNumbers = RAW_NUMBERS.map((t) => new Raw(t));

/** Objects or arrays nested `depth` levels deep. */
export class Deep extends Raw {
  constructor(
    readonly depth: number,
    readonly array: boolean,
  ) {
    super(array ? `${'['.repeat(depth)}1${']'.repeat(depth)}` : `${'{"a":'.repeat(depth)}1${'}'.repeat(depth)}`);
  }
  [fc.toStringMethod](): string {
    return `${this.array ? 'array' : 'object'} nested ${this.depth} deep`;
  }
}

/** Any hostile value: wrong types, edge numbers, huge and control-laden strings, SQL, deep nesting. */
export const hostileValue: fc.Arbitrary<Hostile> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom<Hostile>(...strings) },
  { weight: 1, arbitrary: fc.constantFrom<Hostile>(...hugeStrings) },
  { weight: 2, arbitrary: fc.constantFrom<Hostile>(...rawNumbers) },
  {
    weight: 2,
    arbitrary: fc.constantFrom<Hostile>(
      null,
      true,
      false,
      0,
      -1,
      1.5,
      -0,
      5e-324,
      1e308,
      Number.MAX_SAFE_INTEGER + 2,
      [],
      {},
      [[]],
      ['x'],
      [null],
    ),
  },
  { weight: 1, arbitrary: fc.constantFrom(10, 1_000, 100_000).chain((d) => fc.boolean().map((a) => new Deep(d, a))) },
  { weight: 2, arbitrary: fc.string({ maxLength: 30, unit: 'binary' }) },
  { weight: 1, arbitrary: fc.jsonValue({ maxDepth: 3 }) as fc.Arbitrary<Hostile> },
);

/** Names no schema knows, including the ones that poison prototypes. */
export const unknownKey: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom(
    '__proto__',
    'constructor',
    'prototype',
    'isAdmin',
    'id',
    'version',
    'createdAt',
    'labId ',
    'toString',
    '',
    ' ',
    '\u0000',
  ),
  fc.constantFrom(...SQL),
  fc.string({ minLength: 1, maxLength: 12 }),
);

/** Members of an object schema (all options of a union), each with its schema. */
export function membersOf(schema: z.ZodType): Map<string, z.ZodType> {
  const def = schema._zod.def as unknown as { type: string; shape?: Record<string, z.ZodType>; options?: z.ZodType[] };
  if (def.type === 'object' && def.shape) return new Map(Object.entries(def.shape));
  if (def.type === 'union' && def.options) return new Map(def.options.flatMap((o) => [...membersOf(o)]));
  return new Map();
}

/** The string schema inside optional, nullable, default and transform wrappers, if that is what a member is. */
function stringDef(t: z.ZodType): { format?: string } | null {
  const def = t._zod.def as unknown as { type: string; format?: string; innerType?: z.ZodType; in?: z.ZodType };
  if (def.type === 'string') return def;
  if (def.innerType) return stringDef(def.innerType);
  return def.type === 'pipe' && def.in !== undefined ? stringDef(def.in) : null;
}

/** Members whose value is free text (a string schema, possibly optional, nullable or transformed; not an enum). */
export const textMembers = (schema: z.ZodType): string[] =>
  [...membersOf(schema)].filter(([, t]) => stringDef(t) !== null && stringDef(t)?.format === undefined).map(([k]) => k);

/** Members that are calendar dates or instants, by their zod format. */
export const timeMembers = (schema: z.ZodType): { member: string; format: 'date' | 'datetime' }[] =>
  [...membersOf(schema)].flatMap(([member, t]) => {
    const format = stringDef(t)?.format;
    return format === 'date' || format === 'datetime' ? [{ member, format }] : [];
  });

/** Dates and instants zod accepts that lie at or beyond the edges of what PostgreSQL stores (it has no year 0). */
export const CALENDAR_EDGES = {
  date: ['0000-01-01', '0000-02-29', '0001-01-01', '9999-12-31'],
  datetime: [
    '0000-01-01T00:00:00Z',
    '0001-01-01T00:00:00+14:00',
    '0000-12-31T23:59:59.999-00:30',
    '9999-12-31T23:59:59-14:00',
    '0001-01-01T00:00:00Z',
  ],
};

type Path = (string | number)[];
type Mutation =
  { kind: 'set'; path: Path; value: Hostile } | { kind: 'remove'; path: Path } | { kind: 'extra'; path: Path; key: string; value: Hostile };

/** Paths into a valid body where the schema names a member (objects inside arrays included). */
function memberPaths(body: unknown, prefix: Path = []): Path[] {
  if (Array.isArray(body)) return body.flatMap((v, i) => memberPaths(v, [...prefix, i]));
  if (body === null || typeof body !== 'object') return [];
  return Object.entries(body).flatMap(([k, v]) => [[...prefix, k], ...memberPaths(v, [...prefix, k])]);
}
/** Paths of every object in the body, for unknown members. */
function objectPaths(body: unknown, prefix: Path = []): Path[] {
  if (Array.isArray(body)) return body.flatMap((v, i) => objectPaths(v, [...prefix, i]));
  if (body === null || typeof body !== 'object') return [];
  return [prefix, ...Object.entries(body).flatMap(([k, v]) => objectPaths(v, [...prefix, k]))];
}

/** A copy that keeps Raw values (structuredClone would make them plain objects). */
function clone(v: Hostile): Hostile {
  if (v === null || typeof v !== 'object' || v instanceof Raw || v instanceof Big) return v;
  if (Array.isArray(v)) return v.map(clone);
  const out: Record<string, Hostile> = {};
  for (const [k, x] of Object.entries(v))
    Object.defineProperty(out, k, { value: clone(x), enumerable: true, configurable: true, writable: true });
  return out;
}

function apply(body: Hostile, m: Mutation): Hostile {
  if (m.path.length === 0 && m.kind === 'set') return m.value;
  const copy = clone(body);
  const parentPath = m.kind === 'extra' ? m.path : m.path.slice(0, -1);
  let target: Hostile = copy;
  for (const k of parentPath) {
    if (target === null || typeof target !== 'object' || target instanceof Raw || target instanceof Big) return copy;
    target = (target as Record<string | number, Hostile>)[k] ?? null;
  }
  if (target === null || typeof target !== 'object' || target instanceof Raw || target instanceof Big) return copy;
  const holder = target as Record<string | number, Hostile>;
  if (m.kind === 'extra') Object.defineProperty(holder, m.key, { value: m.value, enumerable: true, configurable: true, writable: true });
  else if (m.kind === 'remove') delete holder[m.path[m.path.length - 1] as string];
  else holder[m.path[m.path.length - 1] as string] = m.value;
  return copy;
}

/**
 * Bodies from a valid `seed`: one to three mutations (a member replaced by a
 * hostile value or removed, an unknown member added, a member of the schema
 * that the seed lacks given a hostile value), or now and then a whole hostile
 * value (an array where the object belongs, a string, deep nesting ...).
 */
export function hostileBody(schema: z.ZodType, seed: Hostile): fc.Arbitrary<Hostile> {
  const paths = memberPaths(seed);
  const objects = objectPaths(seed);
  const absent = [...membersOf(schema).keys()].filter((k) => !(seed && typeof seed === 'object' && k in seed));
  const mutation: fc.Arbitrary<Mutation> = fc.oneof(
    ...(paths.length
      ? [
          fc.record({ kind: fc.constant('set' as const), path: fc.constantFrom(...paths), value: hostileValue }),
          fc.record({ kind: fc.constant('remove' as const), path: fc.constantFrom(...paths) }),
        ]
      : []),
    ...(absent.length
      ? [fc.record({ kind: fc.constant('set' as const), path: fc.constantFrom(...absent).map((k) => [k]), value: hostileValue })]
      : []),
    fc.record({ kind: fc.constant('extra' as const), path: fc.constantFrom(...objects), key: unknownKey, value: hostileValue }),
  );
  return fc.oneof(
    { weight: 8, arbitrary: fc.array(mutation, { minLength: 1, maxLength: 3 }).map((ms) => ms.reduce(apply, seed)) },
    { weight: 1, arbitrary: fc.oneof(hostileValue, fc.constant<Hostile>([seed]), fc.constant<Hostile>([])) },
  );
}

/** The request body text: JSON, with the Raw values' text where the value holds them. */
export function toJsonText(body: Hostile): string {
  if (body instanceof Raw) return body.text;
  if (body instanceof Big) return JSON.stringify(body.text);
  const raws: string[] = [];
  const text = JSON.stringify(body, (_key, value: unknown) => {
    if (value instanceof Big) return value.text;
    if (value instanceof Raw) {
      raws.push(value.text);
      return `\u0001RAW${raws.length - 1}\u0001`;
    }
    return value;
  });
  return text.replace(/"\\u0001RAW(\d+)\\u0001"/g, (_m, i: string) => raws[Number(i)] as string);
}

/** The body as the server's JSON parser reads it, or `invalid` when it is not JSON at all. */
export function parsedAsServer(text: string): { ok: true; value: unknown } | { ok: false } {
  try {
    return { ok: true, value: JSON.parse(text) as unknown };
  } catch {
    return { ok: false };
  }
}

/** Query values: edge numbers for limits, malformed ids and dates, SQL, control characters, huge strings. */
export const hostileQueryValue: fc.Arbitrary<string | Big> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom(...strings) },
  {
    weight: 3,
    arbitrary: fc.constantFrom(
      '-1',
      '0',
      '1',
      '200',
      '201',
      '1000000',
      '99999999999999999999',
      '1.5',
      '1e2',
      ' 5',
      '5 ',
      '+5',
      '-0',
      '0x1F',
      '1_000',
    ),
  },
  { weight: 1, arbitrary: fc.constantFrom(new Big('A', 8_000), new Big('%', 1_000)) },
  { weight: 2, arbitrary: fc.string({ maxLength: 20, unit: 'binary' }) },
);

export type Query = Record<string, string | Big | (string | Big)[]>;

/** A URL carries UTF-8: a lone surrogate cannot be sent, it arrives as U+FFFD. */
const wellFormed = (s: string): string => s.replace(/[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/g, '\ufffd');
const sendable = (v: string | Big): string => wellFormed(textOf(v));

/** The query as the server parses it: strings, and arrays for repeated members. */
export function plainQuery(query: Query): Record<string, string | string[]> {
  const plain: Record<string, string | string[]> = {};
  for (const [key, v] of Object.entries(query)) {
    const k = wellFormed(key);
    const value = Array.isArray(v) ? v.map(sendable) : sendable(v);
    Object.defineProperty(plain, k, { value, enumerable: true, configurable: true, writable: true });
  }
  return plain;
}

/** A query string from an object; arrays repeat the key. */
export function toQueryString(query: Query): string {
  return Object.entries(plainQuery(query))
    .flatMap(([k, v]) => [v].flat().map((x) => `${encodeURIComponent(k)}=${encodeURIComponent(x)}`))
    .join('&');
}

/** Queries of a list: its members and unknown ones, hostile values, now and then a repeated member (an array). */
export function hostileQuery(schema: z.ZodType, valid: Record<string, string> = {}): fc.Arbitrary<Query> {
  const keys = [...membersOf(schema).keys()];
  const value = fc.oneof(
    { weight: 5, arbitrary: hostileQueryValue },
    { weight: 1, arbitrary: fc.array(hostileQueryValue, { minLength: 2, maxLength: 3 }) },
  );
  return fc
    .array(fc.tuple(fc.oneof({ weight: 4, arbitrary: fc.constantFrom(...keys) }, { weight: 1, arbitrary: unknownKey }), value), {
      minLength: 1,
      maxLength: 4,
    })
    .map((pairs) => {
      const query: Query = { ...valid };
      for (const [k, v] of pairs) Object.defineProperty(query, k, { value: v, enumerable: true, configurable: true, writable: true });
      return query;
    });
}

/** Cursors a client could forge: random text, and base64url JSON with out-of-range sort keys and ids. */
export const forgedCursor: fc.Arbitrary<string> = fc.oneof(
  fc.string({ maxLength: 60 }),
  fc.constantFrom(
    '',
    '!!!',
    '%',
    'W10',
    'bnVsbA',
    'A'.repeat(513),
    '9'.repeat(19),
    '9'.repeat(20),
    '9223372036854775807',
    '9223372036854775808',
    '-1',
    '0',
  ),
  fc
    .tuple(
      fc.constantFrom<unknown>(
        '1e100000000',
        '1e9000000000000000',
        '-1e400000',
        'NaN',
        'Infinity',
        '9'.repeat(300),
        '-271821-04-20T00:00:00.000Z',
        '+275760-09-13T00:00:00.000Z',
        '0000-01-01T00:00:00.000Z',
        '-000001-01-01',
        '0000-01-01',
        '10000-01-01',
        '2026-02-30',
        'a\u0000b',
        "'; DROP TABLE vessels; --",
        '',
        null,
        1e308,
        -0,
        true,
        {},
        [],
        { $gt: '' },
      ),
      fc.constantFrom<unknown>('3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f', 'not-a-uuid', '', 'a\u0000b', 42, null, "' OR 1=1 --"),
      fc.constantFrom(2, 2, 2, 1, 3),
    )
    .map(([sortValue, id, arity]) => Buffer.from(JSON.stringify([sortValue, id, 'extra'].slice(0, arity)), 'utf8').toString('base64url')),
);
