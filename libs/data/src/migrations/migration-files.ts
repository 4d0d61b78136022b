import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';

/** One folder of prisma/migrations: `<timestamp>_<name>/migration.sql`. */
export interface MigrationFile {
  readonly name: string;
  readonly sql: string;
  /** Lowercase hex SHA-256 of the file's text, as Prisma records it. */
  readonly checksum: string;
}

const FOLDER = /^\d{14}_[a-z0-9_]+$/;

export const checksumOf = (sql: string): string => createHash('sha256').update(sql, 'utf8').digest('hex');

/** Reads every migration folder, in name (= timestamp) order. */
export async function readMigrationFiles(migrationsDir: string): Promise<MigrationFile[]> {
  const entries = await readdir(migrationsDir, { withFileTypes: true });
  const folders = entries
    .filter((e) => e.isDirectory())
    .map((e) => e.name)
    .sort();
  const files: MigrationFile[] = [];
  for (const name of folders) {
    if (!FOLDER.test(name)) {
      throw new Error(`Migration folder "${name}" must be named <14-digit timestamp>_<lowercase_name>.`);
    }
    const sql = await readFile(join(migrationsDir, name, 'migration.sql'), 'utf8');
    files.push({ name, sql, checksum: checksumOf(sql) });
  }
  return files;
}
