import { bearer, seedBalance, seedCast, seedCheckWeight } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const tenOf = (...values: string[]): string[] => Array.from({ length: 10 }, (_, i) => values[i % values.length] as string);
const corners = (...offCentreReadingsG: string[]) => ({ centreReadingG: '100.0000', offCentreReadingsG, limitG: '0.0003' });

// Corner loads against the lab's limit: on their own, or with a USP <41> check, where they decide the outcome too.
describe('eccentricity checks', () => {
  let t: TestApp;
  let cast: Cast;
  const post = (balanceId: string, body: Record<string, unknown>) =>
    t.http.post(`/v1/balances/${balanceId}/checks`).set(bearer(cast.tokens.analyst)).send(body);

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  it('reports the largest off-centre deviation and its position, and fails beyond the limit', async () => {
    const balance = await seedBalance(t.database.prisma, cast.lab.id);
    const weight = await seedCheckWeight(t.database.prisma, cast.lab.id);
    // The library spec's case: deviations +0.2, -0.4, +0.1, 0 mg; the largest, 0.4 mg at position 1, exceeds 0.3 mg.
    const res = await post(balance.id, {
      kind: 'eccentricity',
      referenceWeightId: weight.id,
      ...corners('100.0002', '99.9996', '100.0001', '100.0000'),
    }).expect(201);
    expect(res.body).toMatchObject({
      kind: 'eccentricity',
      passed: false,
      inputs: { centreReadingG: '100', offCentreReadingsG: ['100.0002', '99.9996', '100.0001', '100'], limitG: '0.0003' },
      results: { deviationsG: ['0.0002', '-0.0004', '0.0001', '0'], maxDeviationG: '0.0004', maxDeviationIndex: 1, pass: false },
      balanceStatus: { after: 'quarantined' },
      minimumWeightG: null,
    });
  });

  it('makes a USP <41> check fail when its corner loads do, and stores no minimum weight then', async () => {
    const balance = await seedBalance(t.database.prisma, cast.lab.id);
    const weight = await seedCheckWeight(t.database.prisma, cast.lab.id);
    const usp41 = {
      kind: 'usp41',
      referenceWeightId: weight.id,
      repeatability: { readingsG: tenOf('100.0000', '100.0001') },
      accuracyReadingG: '100.0001',
    };
    const ok = await post(balance.id, { ...usp41, eccentricity: corners('100.0002', '99.9999') }).expect(201);
    expect(ok.body).toMatchObject({ passed: true, results: { eccentricity: { maxDeviationG: '0.0002', pass: true }, pass: true } });
    const bad = await post(balance.id, { ...usp41, eccentricity: corners('100.0002', '99.9990') }).expect(201);
    expect(bad.body).toMatchObject({
      passed: false,
      minimumWeightStored: false,
      results: {
        repeatability: { pass: true },
        accuracy: { pass: true },
        eccentricity: { maxDeviationIndex: 1, pass: false },
        pass: false,
      },
    });
    const row = await t.database.prisma.balance.findUniqueOrThrow({ where: { id: balance.id } });
    expect(row.minimumWeightDeterminedAt?.toISOString()).toBe(ok.body.performedAt);
  });
});
