import { Client } from 'pg';

import { createTestDatabase, type TestDatabase } from '../support/test-database';

// The service connects as a role that owns nothing: it can append to the audit
// trail but neither change it nor switch its guard triggers off.
describe('the service runtime role', () => {
  let db: TestDatabase;
  let app: Client;

  beforeAll(async () => {
    db = await createTestDatabase();
    app = new Client({ connectionString: db.appUrl });
    await app.connect();
  });
  afterAll(async () => {
    await app.end();
    await db.drop();
  });

  it('is not the owner', async () => {
    const { rows } = await app.query('SELECT current_user AS me, (SELECT rolsuper FROM pg_roles WHERE rolname = current_user) AS super');
    expect(rows[0]).toEqual({ me: 'registry_app', super: false });
  });

  it('may append to the audit trail', async () => {
    await app.query(
      `INSERT INTO audit_entries (actor_kind, action, entity_type, entity_id, entry_hash) VALUES ('system', 'probe', 'lab', 'x', '\\x')`,
    );
  });

  it.each([
    ['UPDATE audit_entries SET reason = $$x$$', /permission denied/],
    ['DELETE FROM audit_entries', /permission denied/],
    ['ALTER TABLE audit_entries DISABLE TRIGGER audit_entries_no_update', /must be owner/],
    ['SET session_replication_role = replica', /permission denied/],
    ['DELETE FROM _prisma_migrations', /permission denied/],
  ])('cannot run %s', async (statement, error) => {
    await expect(app.query(statement)).rejects.toThrow(error);
  });
});
