import { mkdtemp, readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

import { Client } from 'pg';

// Jest's globalSetup does not apply moduleNameMapper: import by path.
import { startEmbeddedPostgres } from '../../libs/data/src/embedded/embedded-postgres';
import { isAlive } from '../../libs/data/src/embedded/postmaster-lock';
import { migrationsDir } from '../../libs/data/src/database-server';
import { migrate } from '../../libs/data/src/migrations/migration-runner';
import { ensureRuntimeLogin, grantRuntimeRole, RUNTIME_ROLE } from '../../libs/data/src/runtime-role';

const PREFIX = 'registry-test-pg-';
const OWNER_FILE = 'owner.pid';

/**
 * One PostgreSQL for the whole run: the server in TEST_DATABASE_URL, or an
 * embedded one on a free port. Builds a migrated template database that every
 * test file clones (tests/support/test-database.ts).
 */
export default async function globalSetup(): Promise<void> {
  const started = Date.now();
  let adminUrl = process.env.TEST_DATABASE_URL;
  if (!adminUrl) {
    await removeStaleFolders();
    const dataDir = await mkdtemp(join(tmpdir(), PREFIX));
    await writeFile(join(dataDir, OWNER_FILE), String(process.pid));
    const server = await startEmbeddedPostgres({ dataDir: join(dataDir, 'cluster'), database: 'postgres' });
    (globalThis as Record<string, unknown>).__registryTestServer = { server, dataDir };
    adminUrl = server.url;
  }
  const template = `registry_template_${process.pid}`;
  await withClient(adminUrl, async (c) => {
    await c.query(`DROP DATABASE IF EXISTS ${template}`);
    await c.query(`CREATE DATABASE ${template}`);
  });
  await migrate(withDatabase(adminUrl, template), migrationsDir(join(__dirname, '..', '..', 'libs', 'data', 'src')));
  // The service runs as an unprivileged role, as in production; skip where we may not create roles.
  try {
    process.env.REGISTRY_TEST_APP_URL = await ensureRuntimeLogin(adminUrl, 'registry-test-runtime-password');
    await grantRuntimeRole(withDatabase(adminUrl, template));
  } catch (err) {
    console.warn(`Tests run as the owner role: could not set up ${RUNTIME_ROLE} (${(err as Error).message})`);
  }
  process.env.REGISTRY_TEST_ADMIN_URL = adminUrl;
  process.env.REGISTRY_TEST_TEMPLATE = template;
  if (process.env.REGISTRY_TEST_VERBOSE) console.log(`\ntest database ready in ${Date.now() - started} ms`);
}

export function withDatabase(url: string, database: string): string {
  const u = new URL(url);
  u.pathname = `/${database}`;
  return u.toString();
}

export async function withClient<T>(url: string, fn: (c: Client) => Promise<T>): Promise<T> {
  const client = new Client({ connectionString: url });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

/**
 * Folders left by killed runs. Each run writes its own pid into its folder;
 * a folder is removed only when that process is gone (never while another
 * run, possibly mid-initdb, still owns it).
 */
async function removeStaleFolders(): Promise<void> {
  for (const name of await readdir(tmpdir())) {
    if (!name.startsWith(PREFIX)) continue;
    const dir = join(tmpdir(), name);
    const owner = Number.parseInt(await readFile(join(dir, OWNER_FILE), 'utf8').catch(() => ''), 10);
    const ageMs =
      Date.now() -
      (await stat(dir)
        .then((s) => s.mtimeMs)
        .catch(() => Date.now()));
    const abandoned = owner > 0 ? !isAlive(owner) : ageMs > 60 * 60_000;
    if (abandoned) await rm(dir, { recursive: true, force: true });
  }
}
