import { EXAMPLES } from '../../apps/api/src/calculations/calculations.examples';
import { seedCredential, seedPerson } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { type Client, expectQuantitiesAsStrings, PROBLEM, signedIn } from './helpers';

/** Every demo example, by endpoint. */
const DEMO: [string, unknown][] = [
  ['water-density', EXAMPLES.waterDensity.demo.value],
  ['air-density', EXAMPLES.airDensity.demo.value],
  ['z-factor', EXAMPLES.zFactor.demo.value],
  ['gravimetric-volume', EXAMPLES.gravimetricVolume.pipette.value],
  ['gravimetric-volume', EXAMPLES.gravimetricVolume.flask.value],
  ['gravimetric-volume', EXAMPLES.gravimetricVolume.burette.value],
  ['buoyancy', EXAMPLES.buoyancy.demo.value],
  ['conventional-mass', EXAMPLES.conventionalMass.demo.value],
  ['balance-check', EXAMPLES.balanceCheck.demo.value],
];

/** The same body with every decimal string turned into a JSON number. */
const asNumbers = (v: unknown): unknown =>
  Array.isArray(v)
    ? v.map(asNumbers)
    : v && typeof v === 'object'
      ? Object.fromEntries(Object.entries(v).map(([k, x]) => [k, asNumbers(x)]))
      : typeof v === 'string' && /^-?\d+(\.\d+)?$/.test(v)
        ? Number(v)
        : v;

describe('calculation endpoints: contract and problems', () => {
  let t: TestApp;
  let c: Client;
  beforeAll(async () => {
    t = await startTestApp();
    c = await signedIn(t);
  });
  afterAll(() => t.close());

  it.each(DEMO)('answers the %s demo example with decimal strings, the same for numbers and strings', async (endpoint, body) => {
    const asStrings = await c.post(endpoint, body).expect(200);
    expectQuantitiesAsStrings(asStrings.body);
    const numeric = await c.post(endpoint, asNumbers(body)).expect(200);
    expect(numeric.body).toEqual(asStrings.body);
  });

  it('needs a signed-in person or a credential with calculations:run', async () => {
    const anonymous = await t.http.post('/v1/calculations/water-density').send({ temperatureC: 20 }).expect(401);
    expect(anonymous.headers['content-type']).toMatch(PROBLEM);
    const owner = await seedPerson(t.database.prisma, { registryRole: 'administrator' });
    const allowed = await seedCredential(t.database.prisma, owner.id, ['calculations:run']);
    await t.http
      .post('/v1/calculations/water-density')
      .set('authorization', `Bearer ${allowed.key}`)
      .send({ temperatureC: 20 })
      .expect(200);
    await t.http.get('/v1/reference/materials').set('authorization', `Bearer ${allowed.key}`).expect(200);
    const other = await seedCredential(t.database.prisma, owner.id, ['factors:read']);
    const refused = await t.http
      .post('/v1/calculations/water-density')
      .set('authorization', `Bearer ${other.key}`)
      .send({ temperatureC: 20 });
    expect(refused.status).toBe(403);
  });

  describe('400 validation-failed, naming field and reason', () => {
    it.each([
      ['a missing field', {}, 'temperatureC', 'is required'],
      ['a wrong type', { temperatureC: true }, 'temperatureC', 'must be a finite number or a decimal string'],
      ['a wrong type (boolean member)', { temperatureC: 20, airSaturated: 'yes' }, 'airSaturated', expect.any(String)],
      ['an unknown field', { temperatureC: 20, colour: 'blue' }, 'colour', 'is not a known field'],
      ['a NaN string', { temperatureC: 'NaN' }, 'temperatureC', expect.stringMatching(/plain decimal/)],
      ['Infinity as a string', { temperatureC: 'Infinity' }, 'temperatureC', expect.stringMatching(/plain decimal/)],
      ['1e309', { temperatureC: '1e309' }, 'temperatureC', expect.stringMatching(/magnitude/)],
      ['an empty string', { temperatureC: '' }, 'temperatureC', expect.stringMatching(/plain decimal/)],
      ['a decimal comma', { temperatureC: '20,5' }, 'temperatureC', expect.stringMatching(/plain decimal/)],
      ['a unit in the value', { temperatureC: '20 °C' }, 'temperatureC', expect.stringMatching(/plain decimal/)],
      ['null', { temperatureC: null }, 'temperatureC', 'must be a finite number or a decimal string'],
    ])('for %s', async (_what, body, field, reason) => {
      const res = await c.post('water-density', body).expect(400);
      expect(res.headers['content-type']).toMatch(PROBLEM);
      expect(res.body).toMatchObject({ status: 400, code: 'validation-failed', type: '/problems/validation-failed' });
      expect(res.body.errors).toEqual([{ field, reason }]);
    });

    it('for an unknown field inside a nested object, at its own path', async () => {
      const airConditions = { temperatureC: 20, pressurePa: 101325, relativeHumidityPercent: 50, altitudeM: 300 };
      const res = await c.post('z-factor', { waterTemperatureC: 20, airConditions }).expect(400);
      expect(res.body.errors).toEqual([{ field: 'airConditions.altitudeM', reason: 'is not a known field' }]);
    });

    it('for a JSON number too large for binary64 (1e309 parses to Infinity)', async () => {
      const res = await t.http
        .post('/v1/calculations/water-density')
        .set(c.auth)
        .set('content-type', 'application/json')
        .send('{"temperatureC": 1e309}')
        .expect(400);
      expect(res.body.errors[0].field).toBe('temperatureC');
    });

    it('for both or neither of two alternatives', async () => {
      const neither = await c.post('z-factor', { waterTemperatureC: 20 }).expect(400);
      expect(neither.body.errors).toEqual([{ field: 'airDensityKgPerM3', reason: expect.stringMatching(/exactly one/) }]);
      const airConditions = { temperatureC: 20, pressurePa: 101325, relativeHumidityPercent: 50 };
      const both = await c.post('z-factor', { waterTemperatureC: 20, airDensityKgPerM3: 1.2, airConditions }).expect(400);
      expect(both.body.errors[0].field).toBe('airConditions');
    });
  });

  describe('422 unprocessable-quantity, naming field and valid range', () => {
    it.each([
      ['water at 80 °C', 'water-density', { temperatureC: 80 }, 'temperatureC', { min: '0', max: '40', unit: '°C' }],
      [
        'humidity 130 %',
        'air-density',
        { temperatureC: 20, pressurePa: 101325, relativeHumidityPercent: 130 },
        'relativeHumidityPercent',
        { min: '0', max: '100', unit: '%' },
      ],
      [
        'a negative mass',
        'buoyancy',
        { readingG: -1, objectDensityKgPerM3: 2700, airDensityKgPerM3: 1.2 },
        'readingG',
        { min: '0', unit: 'g' },
      ],
      ['a negative true mass', 'conventional-mass', { trueMassG: '-0.5', densityKgPerM3: 8000 }, 'trueMassG', { min: '0', unit: 'g' }],
    ])('for %s', async (_what, endpoint, body, field, validRange) => {
      const res = await c.post(endpoint, body).expect(422);
      expect(res.headers['content-type']).toMatch(PROBLEM);
      expect(res.body).toMatchObject({ status: 422, code: 'unprocessable-quantity', validRange });
      expect(res.body.errors).toEqual([{ field, reason: expect.any(String) }]);
    });

    it('for a filled reading lighter than the empty one, with the replicate index', async () => {
      const body = structuredClone(EXAMPLES.gravimetricVolume.flask.value);
      body.replicates[2] = { filledG: '59.0000', emptyG: '59.9050', waterTemperatureC: '21.3' };
      const res = await c.post('gravimetric-volume', body).expect(422);
      expect(res.body.errors).toEqual([
        { field: 'replicates.2.filledG', reason: 'must be greater than emptyG (the net mass of water must be positive)' },
      ]);
    });
  });
});
