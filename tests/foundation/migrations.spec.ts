import { cp, mkdtemp, mkdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { checksumOf, migrate, migrationsDir, readMigrationFiles } from '@registry/data';
import { Client } from 'pg';

import { createEmptyDatabase, type TestDatabase } from '../support/test-database';

async function query<T extends object>(url: string, sql: string): Promise<T[]> {
  const client = new Client({ connectionString: url });
  await client.connect();
  try {
    return (await client.query<T>(sql)).rows;
  } finally {
    await client.end();
  }
}

describe('migration runner', () => {
  let db: TestDatabase;
  let folder: string;

  beforeEach(async () => {
    db = await createEmptyDatabase();
    folder = await mkdtemp(join(tmpdir(), 'registry-migrations-'));
    await cp(migrationsDir(), folder, { recursive: true });
  });
  afterEach(async () => {
    await db.drop();
    await rm(folder, { recursive: true, force: true });
  });

  it('applies every migration once and records it as Prisma does', async () => {
    const files = await readMigrationFiles(folder);
    const first = await migrate(db.url, folder);
    expect(first.applied).toEqual(files.map((f) => f.name));

    const rows = await query<{ migration_name: string; checksum: string; finished_at: Date | null; applied_steps_count: number }>(
      db.url,
      'SELECT migration_name, checksum, finished_at, applied_steps_count FROM _prisma_migrations ORDER BY migration_name',
    );
    expect(rows.map((r) => r.migration_name)).toEqual(files.map((f) => f.name));
    for (const [i, row] of rows.entries()) {
      // Prisma's rule: lowercase hex SHA-256 of the migration.sql text.
      expect(row.checksum).toMatch(/^[0-9a-f]{64}$/);
      expect(row.checksum).toBe(checksumOf(files[i]!.sql));
      expect(row.finished_at).toBeInstanceOf(Date);
      expect(row.applied_steps_count).toBe(1);
    }

    const second = await migrate(db.url, folder);
    expect(second).toEqual({ applied: [], alreadyApplied: files.length });
  });

  it('refuses to start when an applied migration was edited', async () => {
    await migrate(db.url, folder);
    const [first] = await readMigrationFiles(folder);
    await writeFile(join(folder, first!.name, 'migration.sql'), `${first!.sql}\n-- edited\n`);
    await expect(migrate(db.url, folder)).rejects.toThrow(/was edited after it was applied/);
  });

  it('rolls back a failing migration entirely and leaves no record of it', async () => {
    await migrate(db.url, folder);
    const name = '29991231235959_broken';
    await mkdir(join(folder, name));
    await writeFile(join(folder, name, 'migration.sql'), 'CREATE TABLE half_done (id int);\nSELECT * FROM no_such_table;\n');
    await expect(migrate(db.url, folder)).rejects.toThrow(/29991231235959_broken failed and was rolled back/);
    const tables = await query<{ n: string }>(db.url, "SELECT count(*) AS n FROM pg_tables WHERE tablename = 'half_done'");
    expect(tables[0]?.n).toBe('0');
    const recorded = await query<{ n: string }>(db.url, `SELECT count(*) AS n FROM _prisma_migrations WHERE migration_name = '${name}'`);
    expect(recorded[0]?.n).toBe('0');
  });

  it('lets concurrent starts apply each migration exactly once', async () => {
    const files = await readMigrationFiles(folder);
    const reports = await Promise.all([migrate(db.url, folder), migrate(db.url, folder), migrate(db.url, folder)]);
    const appliedCount = reports.reduce((n, r) => n + r.applied.length, 0);
    expect(appliedCount).toBe(files.length);
    const rows = await query<{ n: string }>(db.url, 'SELECT count(*) AS n FROM _prisma_migrations');
    expect(Number(rows[0]?.n)).toBe(files.length);
  });

  it('refuses a database that holds a migration the folder does not know', async () => {
    await migrate(db.url, folder);
    await query(
      db.url,
      "INSERT INTO _prisma_migrations (id, checksum, migration_name, finished_at) VALUES ('x', 'y', '20000101000000_unknown', now())",
    );
    await expect(migrate(db.url, folder)).rejects.toThrow(/missing from the migrations folder/);
  });

  it('refuses a badly named migration folder', async () => {
    await mkdir(join(folder, 'add_things'));
    await writeFile(join(folder, 'add_things', 'migration.sql'), 'SELECT 1;');
    await expect(migrate(db.url, folder)).rejects.toThrow(/must be named/);
  });
});
