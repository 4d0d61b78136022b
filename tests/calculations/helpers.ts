import { bearer, seedPerson, sessionFor } from '../support/factories';
import type { TestApp } from '../support/test-app';

export const PROBLEM = /^application\/problem\+json/;

/** A plain decimal string as the API returns quantities: no exponent, no spaces. */
export const PLAIN_DECIMAL = /^-?\d+(\.\d+)?$/;

/** Member names that carry a quantity by the naming convention (the unit ends the name). */
const QUANTITY_NAME = /(G|Ml|C|Pa|KgPerM3|Percent|PerK|MlPerG|Factor|MoleFraction)$/;

/** Every quantity-named member of a response (at any depth) is a plain decimal string, or null. */
export function quantityMembers(body: unknown, path = ''): { path: string; value: unknown }[] {
  if (Array.isArray(body)) return body.flatMap((v, i) => quantityMembers(v, `${path}.${i}`));
  if (body === null || typeof body !== 'object') return [];
  return Object.entries(body).flatMap(([k, v]) => {
    const here = `${path}.${k}`;
    if (QUANTITY_NAME.test(k) && (typeof v !== 'object' || v === null)) return [{ path: here, value: v }];
    if (QUANTITY_NAME.test(k) && Array.isArray(v)) return v.map((x, i) => ({ path: `${here}.${i}`, value: x }));
    return quantityMembers(v, here);
  });
}

export function expectQuantitiesAsStrings(body: unknown): void {
  const members = quantityMembers(body);
  expect(members.length).toBeGreaterThan(0);
  for (const m of members) {
    if (m.value === null) continue;
    expect({ path: m.path, ok: typeof m.value === 'string' && PLAIN_DECIMAL.test(m.value) }).toEqual({ path: m.path, ok: true });
  }
}

/** |actual - expected| <= tolerance, with a readable failure. */
export function expectNear(actual: string, expected: number | string, tolerance: number): void {
  const diff = Math.abs(Number(actual) - Number(expected));
  expect({ actual, expected, within: diff <= tolerance }).toEqual({ actual, expected, within: true });
}

/** A signed-in analyst of the demo lab; `post` sends a body to a calculation endpoint with their token. */
export async function signedIn(t: TestApp) {
  const person = await seedPerson(t.database.prisma, { displayName: 'Bench Analyst' });
  const auth = bearer(await sessionFor(t.database.prisma, person.id));
  return {
    auth,
    post: (endpoint: string, body: unknown) =>
      t.http.post(`/v1/calculations/${endpoint}`).set(auth).set('content-type', 'application/json').send(JSON.stringify(body)),
    get: (path: string) => t.http.get(path).set(auth),
  };
}
export type Client = Awaited<ReturnType<typeof signedIn>>;
