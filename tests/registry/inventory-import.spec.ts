import { bearer, seedCast, seedVessel } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

const HEADER = 'assetTag,kind,deliveryMode,nominalVolumeMl,graduationIntervalMl,accuracyClass,material,makerSerial,location,notes';

/** n rows of the demo scenario's glassware: flasks, pipettes and burettes in turn. */
function demoRows(n: number, prefix: string): string[] {
  const rows: string[] = [];
  for (let i = 0; i < n; i++) {
    const tag = `${prefix}-${String(i).padStart(5, '0')}`;
    if (i % 3 === 0) rows.push(`${tag},volumetric-flask,,100,,A,borosilicate-3-3,F${i},"Room 2.14, shelf ${i % 7}",`);
    else if (i % 3 === 1) rows.push(`${tag},one-mark-pipette,,25,,AS,borosilicate-3-3,P${i},Titration bench,"Checked ""OK"" on arrival"`);
    else rows.push(`${tag},burette,,50,0.1,B,soda-lime,,Titration bench,`);
  }
  return rows;
}

const csv = (rows: string[], header = HEADER) => [header, ...rows].join('\r\n') + '\r\n';

describe('CSV import of vessels', () => {
  let t: TestApp;
  let cast: Cast;
  const send = (body: string, token = cast.tokens.manager, labId = cast.lab.id, type = 'text/csv') =>
    t.http.post(`/v1/vessels/import?labId=${labId}`).set(bearer(token)).set('content-type', type).send(body);
  const vesselCount = () => t.database.prisma.vessel.count({ where: { labId: cast.lab.id } });

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
  });
  afterAll(() => t.close());

  it('imports 10,000 rows in one go, each with its audit entry, in a few seconds', async () => {
    const body = csv(demoRows(10_000, 'DW'));
    const auditBefore = await t.database.prisma.auditEntry.count();
    const started = performance.now();
    const res = await send(body).expect(201);
    const seconds = (performance.now() - started) / 1000;
    console.log(`CSV import: 10,000 rows (${(body.length / 1e6).toFixed(2)} MB) in ${seconds.toFixed(2)} s`);
    expect(seconds).toBeLessThan(10);
    expect(res.body).toMatchObject({ labId: cast.lab.id, imported: 10_000 });
    expect(res.body.vessels[0]).toMatchObject({ row: 2, assetTag: 'DW-00000' });
    expect(await vesselCount()).toBe(10_000);
    expect((await t.database.prisma.auditEntry.count()) - auditBefore).toBe(10_000);

    const flask = await t.database.prisma.vessel.findUniqueOrThrow({ where: { assetTag: 'DW-00000' } });
    expect(flask).toMatchObject({
      deliveryMode: 'contain',
      limitSource: 'class-table',
      location: 'Room 2.14, shelf 0',
      classStandard: 'ISO 1042:1998',
    });
    expect(flask.limitMl?.toFixed()).toBe('0.1');
    const pipette = await t.database.prisma.vessel.findUniqueOrThrow({ where: { assetTag: 'DW-00001' } });
    expect(pipette.notes).toBe('Checked "OK" on arrival');
    const burette = await t.database.prisma.vessel.findUniqueOrThrow({ where: { assetTag: 'DW-00002' } });
    expect(burette.expansionCoefficientPerK.toFixed()).toBe('0.000027');

    // The audit entries are the same as a single create writes, in file order, on an intact chain.
    const entries = await t.database.prisma.auditEntry.findMany({
      where: { entityType: 'vessel', labId: cast.lab.id },
      orderBy: { seq: 'asc' },
      take: 3,
    });
    expect(entries.map((e) => (e.newValues as { assetTag: string }).assetTag)).toEqual(['DW-00000', 'DW-00001', 'DW-00002']);
    expect(entries[0]).toMatchObject({ action: 'create', actorId: cast.people.manager.id, reason: 'CSV import of 10000 vessels' });
    expect(entries[0]?.newValues).toMatchObject({ id: flask.id, nominalVolumeMl: '100', limitMl: '0.1', version: 1 });
    const broken = await t.database.pool.query('SELECT count(*)::int AS n FROM audit_entries a WHERE entry_hash <> audit_entry_digest(a)');
    expect(broken.rows[0].n).toBe(0);
  }, 60_000);

  it('refuses the whole file for one bad row, naming row and field; nothing is written', async () => {
    const rows = demoRows(50, 'WW');
    rows[29] = 'WW-BAD,burette,,50,,A,borosilicate-3-3,,,'; // record 31: burette without graduation interval
    const before = await vesselCount();
    const auditBefore = await t.database.prisma.auditEntry.count();
    const res = await send(csv(rows)).expect(422);
    expect(res.body).toMatchObject({
      totalErrors: 1,
      errors: [{ row: 31, field: 'graduationIntervalMl', reason: expect.stringMatching(/required/) }],
    });
    expect(await vesselCount()).toBe(before);
    expect(await t.database.prisma.auditEntry.count()).toBe(auditBefore);
  });

  it('reports asset tags repeated in the file and tags already registered, per row', async () => {
    await seedVessel(t.database.prisma, cast.otherLab.id, { assetTag: 'TL-TAKEN' });
    const rows = [
      'TL-1,volumetric-flask,,50,,A,borosilicate-3-3,,,',
      'TL-TAKEN,volumetric-flask,,50,,A,borosilicate-3-3,,,',
      'TL-1,volumetric-flask,,50,,A,borosilicate-3-3,,,',
      'DW-00005,volumetric-flask,,50,,A,borosilicate-3-3,,,',
    ];
    const dupes = await send(csv(rows)).expect(422);
    expect(dupes.body.errors).toEqual([{ row: 4, field: 'assetTag', reason: expect.stringMatching(/repeated \(first in row 2\)/) }]);
    const taken = await send(csv([rows[0], rows[1], rows[3]] as string[])).expect(422);
    expect(taken.body.errors).toEqual([
      { row: 3, field: 'assetTag', reason: 'TL-TAKEN is already registered' },
      { row: 4, field: 'assetTag', reason: 'DW-00005 is already registered' },
    ]);
  });

  it('checks every row with the create rules and caps the report at 200 with a total count', async () => {
    const rows = Array.from({ length: 300 }, (_, i) => `X-${i},beaker,,-1,,A,,,,`);
    const res = await send(csv(rows)).expect(422);
    expect(res.body.errors).toHaveLength(200);
    expect(res.body.totalErrors).toBe(600); // kind and nominal volume on every row
    expect(res.body.errors.slice(0, 2)).toEqual([
      expect.objectContaining({ row: 2, field: 'kind' }),
      expect.objectContaining({ row: 2, field: 'nominalVolumeMl' }),
    ]);
    expect(res.body.errors[199]).toMatchObject({ row: 101 });
  });

  it.each([
    ['an unknown column', 'assetTag,kind,nominalVolumeMl,accuracyClass,colour\r\nA-1,other,1,none,red', { row: 1, field: 'colour' }],
    ['a missing required column', 'assetTag,kind,nominalVolumeMl\r\nA-1,other,1', { row: 1, field: 'accuracyClass' }],
    ['a row with too many fields', `${HEADER}\r\nA-1,other,contain,1,,none,,,,,extra`, { row: 2, field: '(row)' }],
    ['a broken quote', `${HEADER}\r\nA-1,other,contain,1,,none,,,"open`, { row: 2, field: '(file)' }],
    ['no data rows', `${HEADER}\r\n`, { row: 1, field: '(file)' }],
  ])('refuses %s', async (_label, body, error) => {
    const res = await send(body).expect(422);
    expect(res.body.errors).toContainEqual(expect.objectContaining(error));
  });

  it('takes CSV only, from the lab’s managers and administrators', async () => {
    const body = csv(['AC-1,volumetric-flask,,50,,A,borosilicate-3-3,,,']);
    await send(body, cast.tokens.analyst).expect(403);
    await send(body, cast.tokens.auditor).expect(403);
    await send(body, cast.tokens.otherManager).expect(404);
    await send(body, cast.tokens.manager, 'not-a-uuid').expect(400);
    expect((await send(JSON.stringify({ rows: [] }), cast.tokens.manager, cast.lab.id, 'application/json').expect(415)).body.code).toBe(
      'unsupported-media-type',
    );
    await send(body, cast.tokens.admin).expect(201);
  });
});
