import { Client } from 'pg';

import { bearer, seedCast, seedCredential } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

type Cast = Awaited<ReturnType<typeof seedCast>>;

async function sql(t: TestApp, text: string, params: readonly unknown[] = []) {
  const client = new Client({ connectionString: t.testDatabase.url });
  await client.connect();
  try {
    return (await client.query(text, [...params])).rows;
  } finally {
    await client.end();
  }
}

const entry = (labId: string | null, entityType: string, entityId: string, reason: string | null = null) =>
  [
    `INSERT INTO audit_entries (actor_kind, action, entity_type, entity_id, lab_id, new_values, reason, entry_hash)
    VALUES ('system', 'create', $1, $2, $3, '{"assetTag": "PIP-25-004", "nominalVolumeMl": "25"}', $4, '\\x')`,
    [entityType, entityId, labId, reason],
  ] as const;

describe('audit trail endpoints', () => {
  let t: TestApp;
  let cast: Cast;

  beforeAll(async () => {
    t = await startTestApp();
    cast = await seedCast(t.database.prisma);
    for (let i = 0; i < 7; i++) await sql(t, ...entry(cast.lab.id, 'vessel', `v-${i}`));
    for (let i = 0; i < 3; i++) await sql(t, ...entry(cast.otherLab.id, 'balance', `b-${i}`));
    await sql(t, ...entry(null, 'person', 'p-1', 'name spelled wrong'));
  });
  afterAll(() => t.close());

  it('lets administrators and auditors read everything, newest first', async () => {
    for (const token of [cast.tokens.admin, cast.tokens.auditor]) {
      const res = await t.http.get('/v1/audit-trail?limit=200').set(bearer(token)).expect(200);
      expect(res.body.items).toHaveLength(11);
      const seqs = res.body.items.map((e: { seq: number }) => e.seq);
      expect(seqs).toEqual([...seqs].sort((a, b) => b - a));
    }
  });

  it('shows a lab manager only their lab’s entries, and refuses analysts and credentials', async () => {
    const res = await t.http.get('/v1/audit-trail?limit=200').set(bearer(cast.tokens.manager)).expect(200);
    expect(res.body.items).toHaveLength(7);
    expect(res.body.items.every((e: { labId: string }) => e.labId === cast.lab.id)).toBe(true);
    await t.http.get(`/v1/audit-trail?labId=${cast.otherLab.id}`).set(bearer(cast.tokens.manager)).expect(404);
    await t.http.get('/v1/audit-trail').set(bearer(cast.tokens.analyst)).expect(403);
    const { key } = await seedCredential(t.database.prisma, cast.people.admin.id, ['inventory:read', 'factors:read']);
    await t.http.get('/v1/audit-trail').set(bearer(key)).expect(403);
  });

  it('filters by entity and pages with a cursor without gaps or repeats', async () => {
    const seen: number[] = [];
    let cursor: string | null = null;
    do {
      const res: { body: { items: { seq: number }[]; nextCursor: string | null } } = await t.http
        .get(`/v1/audit-trail?entityType=vessel&limit=3${cursor ? `&cursor=${cursor}` : ''}`)
        .set(bearer(cast.tokens.auditor))
        .expect(200);
      seen.push(...res.body.items.map((e) => e.seq));
      cursor = res.body.nextCursor;
    } while (cursor);
    expect(seen).toHaveLength(7);
    expect(new Set(seen).size).toBe(7);
  });

  it('refuses unknown query members and malformed instants', async () => {
    const res = await t.http.get('/v1/audit-trail?colour=red&from=yesterday').set(bearer(cast.tokens.auditor)).expect(400);
    expect(res.body.errors.map((e: { field: string }) => e.field).sort()).toEqual(expect.arrayContaining(['from']));
  });

  it('verifies an intact chain and recomputes the same hashes as the database', async () => {
    const res = await t.http.get('/v1/audit-trail/verification').set(bearer(cast.tokens.auditor)).expect(200);
    expect(res.body).toMatchObject({ intact: true, entriesChecked: 11, firstBroken: null, head: { seq: 11 } });
    const [db] = await sql(t, 'SELECT encode(entry_hash, $$hex$$) AS h FROM audit_entries WHERE seq = 11');
    expect(res.body.head.hash).toBe(db.h);
    await t.http.get('/v1/audit-trail/verification').set(bearer(cast.tokens.manager)).expect(403);
  });

  it('detects a row edited directly in SQL, bypassing the application', async () => {
    // Only the table owner can switch the guard trigger off; the service's runtime role cannot.
    await sql(t, 'ALTER TABLE audit_entries DISABLE TRIGGER audit_entries_no_update');
    await sql(t, `UPDATE audit_entries SET new_values = '{"assetTag": "PIP-25-004", "nominalVolumeMl": "20"}' WHERE seq = 4`);
    await sql(t, 'ALTER TABLE audit_entries ENABLE TRIGGER audit_entries_no_update');
    const res = await t.http.get('/v1/audit-trail/verification').set(bearer(cast.tokens.admin)).expect(200);
    expect(res.body).toMatchObject({ intact: false, entriesChecked: 3, firstBroken: { seq: 4, problem: 'content-changed' } });
  });

  it('detects a removed entry', async () => {
    await sql(t, 'ALTER TABLE audit_entries DISABLE TRIGGER audit_entries_no_update');
    await sql(t, 'DELETE FROM audit_entries WHERE seq IN (2, 4)');
    await sql(t, 'ALTER TABLE audit_entries ENABLE TRIGGER audit_entries_no_update');
    const res = await t.http.get('/v1/audit-trail/verification').set(bearer(cast.tokens.admin)).expect(200);
    expect(res.body).toMatchObject({ intact: false, firstBroken: { seq: 3, problem: 'entry-missing' } });
  });
});
