import { Client } from 'pg';

import { createTestDatabase, type TestDatabase } from '../support/test-database';

// The database itself keeps the audit trail append-only and hash-chained,
// whatever the application does.
describe('audit_entries in the database', () => {
  let db: TestDatabase;
  let sql: Client;

  beforeAll(async () => {
    db = await createTestDatabase();
    sql = new Client({ connectionString: db.url });
    await sql.connect();
    await sql.query(`INSERT INTO audit_entries (actor_kind, action, entity_type, entity_id, new_values)
                     VALUES ('system', 'create', 'lab', 'a', '{"b": 1, "a": 2}'), ('system', 'update', 'lab', 'a', NULL)`);
  });
  afterAll(async () => {
    await sql.end();
    await db.drop();
  });

  it('numbers entries and links each to the previous hash', async () => {
    const rows = (
      await sql.query('SELECT seq, prev_hash, entry_hash, entry_hash = audit_entry_digest(a) AS intact FROM audit_entries a ORDER BY seq')
    ).rows;
    expect(rows.map((r) => Number(r.seq))).toEqual([1, 2]);
    expect(rows[0].prev_hash).toBeNull();
    expect(rows[1].prev_hash).toEqual(rows[0].entry_hash);
    expect(rows.every((r) => r.intact)).toBe(true);
  });

  it.each([['UPDATE audit_entries SET reason = $$tidy$$'], ['DELETE FROM audit_entries WHERE seq = 2'], ['TRUNCATE audit_entries']])(
    'refuses %s',
    async (statement) => {
      await expect(sql.query(statement)).rejects.toThrow(/append-only/);
    },
  );

  it('ignores a caller-supplied sequence number or hash', async () => {
    await sql.query(`INSERT INTO audit_entries (seq, actor_kind, action, entity_type, entity_id, entry_hash)
                     VALUES (999, 'system', 'forge', 'lab', 'a', '\\x00')`);
    const last = (
      await sql.query('SELECT seq, entry_hash = audit_entry_digest(a) AS intact FROM audit_entries a ORDER BY seq DESC LIMIT 1')
    ).rows[0];
    expect(Number(last.seq)).toBe(3);
    expect(last.intact).toBe(true);
  });

  it('keeps one chain under concurrent writers', async () => {
    const writers = await Promise.all(
      Array.from({ length: 8 }, async (_, i) => {
        const c = new Client({ connectionString: db.url });
        await c.connect();
        await c.query('BEGIN');
        await c.query(`INSERT INTO audit_entries (actor_kind, action, entity_type, entity_id) VALUES ('system', 'touch', 'lab', $1)`, [
          `w${i}`,
        ]);
        await new Promise((r) => setTimeout(r, 5));
        await c.query('COMMIT');
        await c.end();
      }),
    );
    expect(writers).toHaveLength(8);
    const broken = await sql.query(`
      SELECT a.seq FROM audit_entries a LEFT JOIN audit_entries p ON p.seq = a.seq - 1
       WHERE a.entry_hash <> audit_entry_digest(a) OR a.prev_hash IS DISTINCT FROM p.entry_hash`);
    expect(broken.rows).toEqual([]);
    const count = await sql.query('SELECT count(*)::int AS n, max(seq)::int AS m FROM audit_entries');
    expect(count.rows[0]).toEqual({ n: 11, m: 11 });
  });
});
