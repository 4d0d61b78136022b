import { bearer, seedBalance, seedCast, seedCredential, seedInstrument, seedReferenceWeight, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;
interface Item {
  id: string;
  labId: string;
  assetTag: string;
  [field: string]: unknown;
}

describe('inventory lists', () => {
  let t: TestApp;
  let cast: Cast;
  const get = (url: string, token = cast.tokens.manager) => t.http.get(url).set(bearer(token));

  /** Every page of a list, following nextCursor. */
  async function all(url: string, token = cast.tokens.manager, from: string | null = null): Promise<{ items: Item[]; pages: number }> {
    const items: Item[] = [];
    let cursor = from;
    let pages = 0;
    do {
      const sep = url.includes('?') ? '&' : '?';
      const res = await get(`${url}${cursor ? `${sep}cursor=${encodeURIComponent(cursor)}` : ''}`, token).expect(200);
      items.push(...(res.body.items as Item[]));
      cursor = res.body.nextCursor as string | null;
      pages++;
    } while (cursor && pages < 100);
    return { items, pages };
  }

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
    const prisma = t.database.prisma;
    // 120 vessels in the lab: sizes repeat (ties in the sort key) and tags are out of order.
    const sizes = ['1', '2', '5', '10', '20', '25', '50', '100'];
    for (let i = 0; i < 120; i++) {
      await seedVessel(prisma, cast.lab.id, {
        assetTag: `${i % 2 ? 'VF' : 'pip'}-${String((i * 37) % 120).padStart(3, '0')}`,
        nominalVolumeMl: sizes[i % sizes.length],
        kind: i % 2 ? 'volumetric-flask' : 'one-mark-pipette',
        deliveryMode: i % 2 ? 'contain' : 'deliver',
        status: i % 10 === 0 ? 'quarantined' : 'in-service',
        location: i % 3 === 0 ? 'Titration Bench' : 'Shelf B',
        makerSerial: i === 7 ? 'SER-50%_X' : null,
        createdAt: new Date(Date.UTC(2026, 0, 1, 0, 0, Math.floor(i / 4))),
      });
    }
    for (let i = 0; i < 5; i++) await seedVessel(prisma, cast.otherLab.id, { assetTag: `WW-${i}` });
  });
  afterAll(() => t.close());

  it.each(['assetTag', '-assetTag', 'createdAt', '-createdAt', 'nominalVolumeMl', '-nominalVolumeMl', 'updatedAt'])(
    'pages through 120 vessels sorted by %s without duplicates or gaps',
    async (sort) => {
      const { items, pages } = await all(`/v1/vessels?labId=${cast.lab.id}&limit=7&sort=${sort}`);
      expect(pages).toBe(Math.ceil(120 / 7));
      expect(items).toHaveLength(120);
      expect(new Set(items.map((i) => i.id)).size).toBe(120);
      const field = sort.replace('-', '');
      const keys = items.map((i) => (field === 'nominalVolumeMl' ? Number(i[field]) : String(i[field])));
      const sorted = [...keys].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
      if (sort.startsWith('-')) sorted.reverse();
      if (field !== 'assetTag') expect(keys).toEqual(sorted); // text order follows the database collation
    },
  );

  it('keeps pages stable when items are added between pages', async () => {
    const first = await get(`/v1/vessels?labId=${cast.lab.id}&limit=50&sort=createdAt`).expect(200);
    const extra = await seedVessel(t.database.prisma, cast.lab.id, { assetTag: 'ZZ-NEW', createdAt: new Date(Date.UTC(2025, 0, 1)) });
    const rest = await all(`/v1/vessels?labId=${cast.lab.id}&limit=50&sort=createdAt`, cast.tokens.manager, first.body.nextCursor);
    const ids = [...first.body.items.map((i: Item) => i.id), ...rest.items.map((i) => i.id)];
    expect(new Set(ids).size).toBe(120);
    expect(ids).not.toContain(extra.id);
    await t.database.prisma.vessel.update({ where: { id: extra.id }, data: { labId: cast.otherLab.id } });
  });

  it('filters by kind, status and text (case-insensitive, in tag, serial and location)', async () => {
    const flasks = await all(`/v1/vessels?labId=${cast.lab.id}&kind=volumetric-flask&limit=200`);
    expect(flasks.items).toHaveLength(60);
    expect(flasks.items.every((i) => i.kind === 'volumetric-flask')).toBe(true);
    const quarantined = await all(`/v1/vessels?status=quarantined`);
    expect(quarantined.items).toHaveLength(12);
    const bench = await all(`/v1/vessels?q=titration%20BENCH`);
    expect(bench.items).toHaveLength(40);
    expect((await all(`/v1/vessels?q=PIP-00`)).items.map((i) => i.assetTag)).toEqual([
      'pip-000',
      'pip-002',
      'pip-004',
      'pip-006',
      'pip-008',
    ]);
    // Wildcard characters are matched literally.
    expect((await all(`/v1/vessels?q=${encodeURIComponent('50%_')}`)).items).toHaveLength(1);
    expect((await all(`/v1/vessels?q=${encodeURIComponent('%')}`)).items).toHaveLength(1);
  });

  it('shows each reader only the labs they can read', async () => {
    expect((await all('/v1/vessels?limit=200', cast.tokens.analyst)).items.every((i) => i.labId === cast.lab.id)).toBe(true);
    expect((await all('/v1/vessels?limit=200', cast.tokens.otherManager)).items).toHaveLength(6);
    expect((await all('/v1/vessels?limit=200', cast.tokens.auditor)).items).toHaveLength(126);
    const other = await get(`/v1/vessels?labId=${cast.lab.id}`, cast.tokens.otherManager).expect(200);
    expect(other.body).toEqual({ items: [], nextCursor: null });
    const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read'], [cast.otherLab.id]);
    expect((await all('/v1/vessels?limit=200', key)).items.every((i) => i.labId === cast.otherLab.id)).toBe(true);
  });

  it.each([
    'limit=201',
    'limit=0',
    'sort=colour',
    'cursor=bm90LWEtY3Vyc29y',
    'status=broken',
    'kind=beaker',
    'dueBefore=2026-01-01',
    'unknown=1',
    'q=%00',
  ])('refuses %s with 400', async (query) => {
    const res = await get(`/v1/vessels?${query}`).expect(400);
    expect(res.body.code).toBe('validation-failed');
  });

  it('refuses a cursor from another sort', async () => {
    const page = await get(`/v1/vessels?labId=${cast.lab.id}&limit=5&sort=createdAt`).expect(200);
    await get(`/v1/vessels?sort=nominalVolumeMl&cursor=${encodeURIComponent(page.body.nextCursor)}`).expect(400);
  });

  describe('due dates', () => {
    it('lists balances, reference weights and instruments due before a date, soonest first, undated last', async () => {
      const prisma = t.database.prisma;
      const day = (d: string) => new Date(`${d}T00:00:00Z`);
      await seedBalance(prisma, cast.lab.id, { assetTag: 'BAL-01', externalCalibrationDue: day('2026-05-01') });
      await seedBalance(prisma, cast.lab.id, { assetTag: 'BAL-02', externalCalibrationDue: day('2026-09-01') });
      await seedBalance(prisma, cast.lab.id, { assetTag: 'BAL-03' });
      await seedReferenceWeight(prisma, cast.lab.id, { assetTag: 'CW-F1-100G-1', certificateDue: day('2026-03-01') });
      await seedReferenceWeight(prisma, cast.lab.id, { assetTag: 'CW-F1-200G-1', certificateDue: day('2027-03-01') });
      await seedInstrument(prisma, cast.lab.id, { assetTag: 'TH-07', calibrationDue: day('2026-06-30') });
      await seedInstrument(prisma, cast.lab.id, { assetTag: 'BARO-01', kind: 'barometer', calibrationDue: day('2026-06-01') });

      const balances = await get('/v1/balances?dueBefore=2026-07-01').expect(200);
      expect(balances.body.items.map((i: Item) => i.assetTag)).toEqual(['BAL-01']);
      const sorted = await all('/v1/balances?sort=externalCalibrationDue&limit=1');
      expect(sorted.items.map((i) => i.assetTag)).toEqual(['BAL-01', 'BAL-02', 'BAL-03']);
      const desc = await all('/v1/balances?sort=-externalCalibrationDue&limit=1');
      expect(desc.items.map((i) => i.assetTag)).toEqual(['BAL-02', 'BAL-01', 'BAL-03']);

      const weights = await get('/v1/reference-weights?dueBefore=2026-07-01&oimlClass=F1').expect(200);
      expect(weights.body.items.map((i: Item) => i.assetTag)).toEqual(['CW-F1-100G-1']);

      const instruments = await all('/v1/instruments?dueBefore=2026-07-01&sort=calibrationDue&limit=1');
      expect(instruments.items.map((i) => i.assetTag)).toEqual(['BARO-01', 'TH-07']);
      const thermometers = await get('/v1/instruments?kind=thermometer').expect(200);
      expect(thermometers.body.items.map((i: Item) => i.assetTag)).toEqual(['TH-07']);
    });
  });
});
