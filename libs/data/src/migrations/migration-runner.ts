import { randomUUID } from 'node:crypto';

import { Client } from 'pg';

import { type MigrationFile, readMigrationFiles } from './migration-files';

/** The advisory lock key Prisma's own `migrate deploy` takes, so the two exclude each other. */
export const MIGRATION_LOCK_KEY = 72707369;

export interface MigrationReport {
  readonly applied: string[];
  readonly alreadyApplied: number;
}

export class MigrationError extends Error {
  override readonly name = 'MigrationError';
}

const CREATE_TABLE = `
CREATE TABLE IF NOT EXISTS "_prisma_migrations" (
  "id"                  VARCHAR(36) PRIMARY KEY NOT NULL,
  "checksum"            VARCHAR(64) NOT NULL,
  "finished_at"         TIMESTAMPTZ,
  "migration_name"      VARCHAR(255) NOT NULL,
  "logs"                TEXT,
  "rolled_back_at"      TIMESTAMPTZ,
  "started_at"          TIMESTAMPTZ NOT NULL DEFAULT now(),
  "applied_steps_count" INTEGER NOT NULL DEFAULT 0
)`;

interface AppliedRow {
  migration_name: string;
  checksum: string;
  finished_at: Date | null;
  rolled_back_at: Date | null;
}

/**
 * Applies pending migrations in order, each in its own transaction, under a
 * session advisory lock so that concurrent starts wait for each other. Records
 * them in `_prisma_migrations` exactly as Prisma does (same columns, SHA-256
 * checksum of the file), and refuses to run if an applied file was edited or a
 * previous attempt failed half-way.
 */
export async function migrate(
  databaseUrl: string,
  migrationsDir: string,
  log: (m: string) => void = () => undefined,
): Promise<MigrationReport> {
  const files = await readMigrationFiles(migrationsDir);
  const client = new Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    await client.query('SELECT pg_advisory_lock($1)', [MIGRATION_LOCK_KEY]);
    await client.query(CREATE_TABLE);
    const rows = (await client.query<AppliedRow>('SELECT migration_name, checksum, finished_at, rolled_back_at FROM "_prisma_migrations"'))
      .rows;
    const applied = checkHistory(files, rows);
    const pending = files.filter((f) => !applied.has(f.name));
    for (const file of pending) {
      log(`Applying migration ${file.name}`);
      await applyOne(client, file);
    }
    return { applied: pending.map((f) => f.name), alreadyApplied: applied.size };
  } finally {
    await client.query('SELECT pg_advisory_unlock($1)', [MIGRATION_LOCK_KEY]).catch(() => undefined);
    await client.end();
  }
}

function checkHistory(files: MigrationFile[], rows: AppliedRow[]): Set<string> {
  const byName = new Map(files.map((f) => [f.name, f]));
  const applied = new Set<string>();
  for (const row of rows) {
    if (row.rolled_back_at) continue;
    if (!row.finished_at) {
      throw new MigrationError(`Migration ${row.migration_name} started but never finished; repair the database before starting.`);
    }
    const file = byName.get(row.migration_name);
    if (!file) {
      throw new MigrationError(`Migration ${row.migration_name} is applied in the database but missing from the migrations folder.`);
    }
    if (file.checksum !== row.checksum) {
      throw new MigrationError(
        `Migration ${row.migration_name} was edited after it was applied (checksum differs). ` +
          'Never edit an applied migration: add a new one.',
      );
    }
    applied.add(row.migration_name);
  }
  return applied;
}

async function applyOne(client: Client, file: MigrationFile): Promise<void> {
  const id = randomUUID();
  try {
    await client.query('BEGIN');
    await client.query(
      'INSERT INTO "_prisma_migrations" (id, checksum, migration_name, started_at, applied_steps_count) VALUES ($1, $2, $3, now(), 0)',
      [id, file.checksum, file.name],
    );
    await client.query(file.sql);
    await client.query('UPDATE "_prisma_migrations" SET finished_at = clock_timestamp(), applied_steps_count = 1 WHERE id = $1', [id]);
    await client.query('COMMIT');
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw new MigrationError(`Migration ${file.name} failed and was rolled back: ${(err as Error).message}`);
  }
}
