import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, signedIn } from './helpers';

const CALCULATIONS = ['water-density', 'air-density', 'z-factor', 'gravimetric-volume', 'buoyancy', 'conventional-mass', 'balance-check'];

describe('calculation and reference endpoints in the OpenAPI document', () => {
  let t: TestApp;
  let doc: Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
  beforeAll(async () => {
    t = await startTestApp();
    doc = (await t.http.get('/openapi.json').expect(200)).body;
  });
  afterAll(() => t.close());

  it.each(CALCULATIONS)('documents POST /v1/calculations/%s with an example, its schemas and its problems', (name) => {
    const op = doc.paths[`/v1/calculations/${name}`]?.post;
    expect(op).toBeDefined();
    const content = op.requestBody.content['application/json'];
    expect(Object.keys(content.examples).length).toBeGreaterThan(0);
    for (const example of Object.values<{ value: unknown; summary: string }>(content.examples)) {
      expect(example.summary).toEqual(expect.any(String));
      expect(example.value).toEqual(expect.any(Object));
    }
    expect(content.schema.$ref).toMatch(/RequestDto$/);
    expect(op.responses['200'].content['application/json'].schema.$ref).toMatch(/ResponseDto_Output$/);
    expect(Object.keys(op.responses)).toEqual(expect.arrayContaining(['200', '400', '422']));
    expect(op.security).toEqual([{ bearer: [] }]);
  });

  it('puts a caution on the results that may decide whether equipment is used', () => {
    for (const path of ['/v1/calculations/gravimetric-volume', '/v1/calculations/balance-check']) {
      expect(doc.paths[path].post.description).toMatch(/Caution.*qualified person/s);
    }
    expect(doc.paths['/v1/reference/tolerances'].get.description).toMatch(/Caution/);
  });

  it('documents the reference endpoints with examples', () => {
    const params = doc.paths['/v1/reference/tolerances'].get.parameters;
    expect(params.map((p: { name: string }) => p.name).sort()).toEqual(['accuracyClass', 'family', 'kind']);
    for (const p of params) expect(p.schema.example).toEqual(expect.any(String));
    const ref = doc.paths['/v1/reference/materials'].get.responses['200'].content['application/json'].schema.$ref.split('/').pop();
    expect(doc.components.schemas[ref].example.materials[0].id).toBe('borosilicate-3-3');
  });

  it('describes quantities as a number or a bounded decimal string', () => {
    const schema = doc.components.schemas.WaterDensityRequestDto;
    expect(schema.additionalProperties).toBe(false);
    expect(schema.properties.temperatureC.anyOf).toEqual([
      { type: 'number' },
      expect.objectContaining({ type: 'string', maxLength: 40, pattern: expect.any(String) }),
    ]);
  });
});

describe('GET /v1/reference/*', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  it('lists every tolerance table with its source and verification flags', async () => {
    const res = await c.get('/v1/reference/tolerances').expect(200);
    expect(res.body.caution).toMatch(/from-memory/);
    expect(res.body.tables.length).toBeGreaterThanOrEqual(10);
    for (const table of res.body.tables) {
      expect(table).toMatchObject({ id: expect.any(String), standard: expect.any(String), table: expect.any(String) });
      for (const cls of table.classes) expect(['checked', 'from-memory']).toContain(table.verification[cls]);
    }
    // ISO 1042:1998 class A 100 mL: 0.10 mL as published (checked against the German Eichordnung, Anlage 12).
    const flasks = res.body.tables.find((x: { id: string }) => x.id === 'iso-1042-1998');
    expect(flasks.verification.A).toBe('checked');
    expect(flasks.rows.find((r: { nominalMl: string }) => r.nominalMl === '100').limitMl.A).toBe('0.10');
  });

  it('filters by kind, class and family', async () => {
    const burettes = await c.get('/v1/reference/tolerances?kind=burette').expect(200);
    expect(burettes.body.tables.map((x: { id: string }) => x.id).sort()).toEqual(['astm-e287', 'iso-385-2005']);
    const astm = await c.get('/v1/reference/tolerances?family=ASTM&kind=volumetric-flask').expect(200);
    expect(astm.body.tables.every((x: { family: string }) => x.family === 'ASTM')).toBe(true);
    const piston = await c.get('/v1/reference/tolerances?accuracyClass=none').expect(200);
    expect(piston.body.tables.every((x: { classes: string[] }) => x.classes.includes('none'))).toBe(true);
    expect(piston.body.tables[0].rows[0].randomLimitMl).toEqual(expect.objectContaining({ none: expect.any(String) }));
  });

  it('refuses an unknown filter value or parameter with 400', async () => {
    const bad = await c.get('/v1/reference/tolerances?kind=teapot').expect(400);
    expect(bad.body.errors[0].field).toBe('kind');
    await c.get('/v1/reference/tolerances?colour=blue').expect(400);
  });

  it('lists the vessel materials with coefficients in plain notation', async () => {
    const res = await c.get('/v1/reference/materials').expect(200);
    expect(res.body.materials.find((m: { id: string }) => m.id === 'borosilicate-3-3')).toMatchObject({
      expansionCoefficientPerK: '0.0000099',
      source: expect.stringMatching(/ISO 3585/),
    });
    for (const m of res.body.materials) expect(m.expansionCoefficientPerK).toMatch(/^\d+(\.\d+)?$/);
  });
});
