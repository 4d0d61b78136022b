import fc from 'fast-check';

import { Big, type Hostile, hostileValue, Raw, unknownKey } from '../registry/hostile-input.arbitraries';

/*
 * Requests for every operation of the service's own OpenAPI document, so a
 * new route is fuzzed as soon as it is documented. Values are derived from
 * the JSON schemas the document carries (generated from the zod schemas):
 * valid-ish ones (right type, format, range, with identifiers of real
 * objects) and hostile mutations of them.
 */

export interface JsonSchema {
  readonly $ref?: string;
  readonly type?: string | string[];
  readonly enum?: readonly unknown[];
  readonly const?: unknown;
  readonly format?: string;
  readonly pattern?: string;
  readonly minLength?: number;
  readonly maxLength?: number;
  readonly minimum?: number;
  readonly maximum?: number;
  readonly exclusiveMinimum?: number;
  readonly exclusiveMaximum?: number;
  readonly minItems?: number;
  readonly maxItems?: number;
  readonly items?: JsonSchema;
  readonly properties?: Record<string, JsonSchema>;
  readonly required?: readonly string[];
  readonly anyOf?: readonly JsonSchema[];
  readonly oneOf?: readonly JsonSchema[];
  readonly allOf?: readonly JsonSchema[];
  readonly example?: unknown;
  readonly default?: unknown;
}

interface Parameter {
  readonly name: string;
  readonly in: 'path' | 'query' | 'header';
  readonly required?: boolean;
  readonly schema?: JsonSchema;
}

export interface OpenApiDocument {
  readonly paths: Record<string, Record<string, OperationObject>>;
  readonly components?: { schemas?: Record<string, JsonSchema> };
}
interface OperationObject {
  readonly parameters?: readonly Parameter[];
  readonly requestBody?: {
    content?: Record<string, { schema?: JsonSchema; examples?: Record<string, { value: unknown }>; example?: unknown }>;
  };
  readonly security?: readonly unknown[];
}

/** One documented operation, as the fuzzer needs it. */
export interface Operation {
  /** `METHOD /template/:param`, the form the authorization matrix uses. */
  readonly route: string;
  readonly method: string;
  readonly template: string;
  readonly pathParams: readonly Parameter[];
  readonly queryParams: readonly Parameter[];
  readonly ifMatch: boolean;
  readonly contentType: string | null;
  readonly body: JsonSchema | null;
  readonly examples: readonly unknown[];
}

/** Every operation of the document (the docs' own pages are not operations there). */
export function operationsOf(doc: OpenApiDocument): Operation[] {
  return Object.entries(doc.paths).flatMap(([path, methods]) =>
    Object.entries(methods).map(([method, op]) => {
      const params = op.parameters ?? [];
      const [contentType, media] = Object.entries(op.requestBody?.content ?? {})[0] ?? [null, undefined];
      const examples = media ? [...Object.values(media.examples ?? {}).map((e) => e.value), ...(media.example ? [media.example] : [])] : [];
      return {
        route: `${method.toUpperCase()} ${path.replace(/\{(\w+)\}/g, ':$1')}`,
        method: method.toUpperCase(),
        template: path,
        pathParams: params.filter((p) => p.in === 'path'),
        queryParams: params.filter((p) => p.in === 'query'),
        ifMatch: params.some((p) => p.in === 'header' && p.name.toLowerCase() === 'if-match'),
        contentType,
        body: media?.schema ?? null,
        examples,
      };
    }),
  );
}

/** Identifiers of real objects, by the member or parameter name that holds them. */
export interface IdPool {
  readonly byName: Record<string, readonly string[]>;
  readonly any: readonly string[];
}

/** Builds value arbitraries from the document's schemas. */
export class SchemaArbitraries {
  constructor(
    private readonly doc: OpenApiDocument,
    private readonly ids: IdPool,
  ) {}

  resolve(schema: JsonSchema): JsonSchema {
    if (!schema.$ref) return schema;
    const name = schema.$ref.replace('#/components/schemas/', '');
    const target = this.doc.components?.schemas?.[name];
    if (!target) throw new Error(`unresolved ${schema.$ref}`);
    return this.resolve(target);
  }

  /** An identifier for a member named `name`: a real object's id where one is known, now and then an unknown one. */
  private id(name: string): fc.Arbitrary<string> {
    const known = this.ids.byName[name] ?? this.ids.any;
    return fc.oneof({ weight: 6, arbitrary: fc.constantFrom(...known) }, { weight: 1, arbitrary: fc.uuid({ version: 4 }) });
  }

  /** Valid-ish values of `schema`; `name` is the member or parameter that holds it. */
  valid(schema: JsonSchema, name = '', depth = 0): fc.Arbitrary<unknown> {
    const s = this.resolve(schema);
    const options = s.anyOf ?? s.oneOf;
    if (options) return fc.oneof(...options.map((o) => this.valid(o, name, depth)));
    if (s.allOf?.length) return this.valid(s.allOf[0] as JsonSchema, name, depth);
    if (s.const !== undefined) return fc.constant(s.const);
    if (s.enum) return fc.constantFrom(...s.enum);
    const types = [s.type ?? (s.properties ? 'object' : 'string')].flat();
    return fc.oneof(...types.map((type) => this.ofType(s, type, name, depth)));
  }

  private ofType(s: JsonSchema, type: string, name: string, depth: number): fc.Arbitrary<unknown> {
    switch (type) {
      case 'null':
        return fc.constant(null);
      case 'boolean':
        return fc.boolean();
      case 'integer':
      case 'number': {
        const min = s.minimum ?? (s.exclusiveMinimum !== undefined ? s.exclusiveMinimum + 1 : -1_000);
        const max = s.maximum ?? (s.exclusiveMaximum !== undefined ? s.exclusiveMaximum - 1 : 100_000);
        return type === 'integer'
          ? fc.integer({ min: Math.ceil(min), max: Math.floor(max) })
          : fc.double({ min, max, noNaN: true, noDefaultInfinity: true });
      }
      case 'array': {
        const item = this.valid(s.items ?? {}, name.replace(/s$/, ''), depth + 1);
        const minLength = s.minItems ?? 0;
        return fc.array(item, { minLength, maxLength: Math.min(s.maxItems ?? minLength + 3, minLength + 3) });
      }
      case 'object':
        return this.object(s, depth);
      default:
        return this.string(s, name);
    }
  }

  private object(s: JsonSchema, depth: number): fc.Arbitrary<unknown> {
    const props = s.properties ?? {};
    const required = new Set(s.required ?? []);
    if (depth > 6) return fc.constant({});
    const record: Record<string, fc.Arbitrary<unknown>> = {};
    for (const [key, schema] of Object.entries(props)) record[key] = this.valid(schema, key, depth + 1);
    const requiredKeys = Object.keys(props).filter((k) => required.has(k));
    return fc.record(record, { requiredKeys });
  }

  private string(s: JsonSchema, name: string): fc.Arbitrary<string> {
    const example = typeof s.example === 'string' ? [s.example] : [];
    if (s.format === 'uuid') return this.id(name);
    if (s.format === 'date-time')
      return fc.date({ min: new Date('2020-01-01'), max: new Date('2027-12-31'), noInvalidDate: true }).map((d) => d.toISOString());
    if (s.format === 'date')
      return fc
        .date({ min: new Date('2020-01-01'), max: new Date('2027-12-31'), noInvalidDate: true })
        .map((d) => d.toISOString().slice(0, 10));
    if (s.format === 'email') return fc.constantFrom(...(this.ids.byName.email ?? ['lena.berger@waterworks.example']));
    if (s.format === 'uri') return fc.constantFrom('https://samples.waterworks.example/hooks/registry', ...example);
    if (s.pattern) {
      try {
        const matching = fc
          .stringMatching(new RegExp(s.pattern))
          .filter((v) => v.length <= (s.maxLength ?? 200) && v.length >= (s.minLength ?? 0));
        return example.length ? fc.oneof(fc.constantFrom(...example), matching) : matching;
      } catch {
        if (example.length) return fc.constantFrom(...example);
      }
    }
    const text = fc.string({ minLength: s.minLength ?? 0, maxLength: Math.min(s.maxLength ?? 40, 40) });
    return example.length ? fc.oneof(fc.constantFrom(...example), text) : text;
  }
}

/** Hostile values the fuzzer adds to the shared ones: number edge cases as strings, huge arrays and objects. */
const NUMBER_TEXTS = [
  'NaN',
  '1e309',
  '-1e309',
  '-0',
  '1e-400',
  '1e99999',
  '0x10',
  'Infinity',
  '1_000',
  '١٢٣',
  ' 1',
  '1 ',
  '+1',
  '.',
  '-',
  '',
];
const HUGE_ARRAY = new Raw(`[${'"1",'.repeat(99_999)}"1"]`);
const HUGE_OBJECT = new Raw(`{${Array.from({ length: 20_000 }, (_, i) => `"k${i}":1`).join(',')}}`);
export const fuzzValue: fc.Arbitrary<Hostile> = fc.oneof(
  { weight: 6, arbitrary: hostileValue },
  { weight: 3, arbitrary: fc.constantFrom<Hostile>(...NUMBER_TEXTS) },
  { weight: 1, arbitrary: fc.constantFrom<Hostile>(HUGE_ARRAY, HUGE_OBJECT, new Big('x', 300_000)) },
);

type Path = (string | number)[];
export interface Mutated {
  readonly value: Hostile;
  /** The member paths that were changed (for the field a refusal must name). */
  readonly paths: readonly string[];
}

/** Paths of members (objects inside arrays included), and of objects (for unknown members). */
function paths(v: unknown, prefix: Path = []): { members: Path[]; objects: Path[] } {
  if (Array.isArray(v)) {
    const parts = v.map((x, i) => paths(x, [...prefix, i]));
    return { members: parts.flatMap((p) => p.members), objects: parts.flatMap((p) => p.objects) };
  }
  if (v === null || typeof v !== 'object' || v instanceof Raw || v instanceof Big) return { members: [], objects: [] };
  const parts = Object.entries(v).map(([k, x]) => ({ key: [...prefix, k], inner: paths(x, [...prefix, k]) }));
  return {
    members: parts.flatMap((p) => [p.key, ...p.inner.members]),
    objects: [prefix, ...parts.flatMap((p) => p.inner.objects)],
  };
}

function setAt(root: Hostile, path: Path, f: (holder: Record<string | number, Hostile>, key: string | number) => void): Hostile {
  const copy = structuredCloneKeepingRaw(root);
  let holder: Hostile = copy;
  for (const k of path.slice(0, -1)) {
    // An earlier mutation may have replaced or removed a member on the way: then there is nothing to change.
    if (holder === null || typeof holder !== 'object' || holder instanceof Raw || holder instanceof Big) return copy;
    holder = (holder as Record<string | number, Hostile>)[k] ?? null;
  }
  if (holder !== null && typeof holder === 'object' && !(holder instanceof Raw) && !(holder instanceof Big)) {
    f(holder as Record<string | number, Hostile>, path[path.length - 1] as string | number);
  }
  return copy;
}

function structuredCloneKeepingRaw(v: Hostile): Hostile {
  if (v === null || typeof v !== 'object' || v instanceof Raw || v instanceof Big) return v;
  if (Array.isArray(v)) return v.map(structuredCloneKeepingRaw);
  const out: Record<string, Hostile> = {};
  for (const [k, x] of Object.entries(v)) {
    Object.defineProperty(out, k, { value: structuredCloneKeepingRaw(x), enumerable: true, configurable: true, writable: true });
  }
  return out;
}

/** One to three hostile mutations of a valid-ish value: a member replaced or removed, an unknown member added. */
export function mutated(valid: fc.Arbitrary<unknown>): fc.Arbitrary<Mutated> {
  return valid.chain((seed) => {
    const { members, objects } = paths(seed);
    const start: Mutated = { value: seed as Hostile, paths: [] };
    type Step = (m: Mutated) => Mutated;
    const steps: fc.Arbitrary<Step>[] = [
      fc
        .tuple(fc.constantFrom(...objects.concat(objects.length ? [] : [[]])), unknownKey, fuzzValue)
        .map(([at, key, value]): Step => (m) => ({
          value: setAt(m.value, [...at, key], (h) =>
            Object.defineProperty(h, key, { value, enumerable: true, configurable: true, writable: true }),
          ),
          paths: [...m.paths, [...at, key].join('.')],
        })),
    ];
    if (members.length) {
      steps.push(
        fc
          .tuple(fc.constantFrom(...members), fuzzValue)
          .map(([at, value]): Step => (m) => ({ value: setAt(m.value, at, (h, k) => (h[k] = value)), paths: [...m.paths, at.join('.')] })),
        fc
          .constantFrom(...members)
          .map((at): Step => (m) => ({ value: setAt(m.value, at, (h, k) => delete h[k]), paths: [...m.paths, at.join('.')] })),
      );
    }
    const whole = fuzzValue.map((value): Mutated => ({ value, paths: ['(body)'] }));
    return fc.oneof(
      {
        weight: 8,
        arbitrary: fc.array(fc.oneof(...steps), { minLength: 1, maxLength: 3 }).map((ss) => ss.reduce((m, step) => step(m), start)),
      },
      { weight: 1, arbitrary: whole },
    );
  });
}
