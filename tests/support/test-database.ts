import { randomBytes } from 'node:crypto';

import { Client } from 'pg';

/** A database of its own for one test file, cloned from the migrated template. */
export interface TestDatabase {
  /** Owner connection: seeding, tampering, direct SQL. */
  readonly url: string;
  /** The service's unprivileged connection (the owner's where no runtime role exists). */
  readonly appUrl: string;
  readonly name: string;
  drop(): Promise<void>;
}

function env(name: string): string {
  const value = process.env[name];
  if (!value) throw new Error(`${name} is not set: run the tests through jest (globalSetup prepares the database).`);
  return value;
}

export function databaseUrl(name: string): string {
  const u = new URL(env('REGISTRY_TEST_ADMIN_URL'));
  u.pathname = `/${name}`;
  return u.toString();
}

function appDatabaseUrl(name: string): string {
  const base = process.env.REGISTRY_TEST_APP_URL;
  if (!base) return databaseUrl(name);
  const u = new URL(base);
  u.pathname = `/${name}`;
  return u.toString();
}

async function admin<T>(fn: (c: Client) => Promise<T>): Promise<T> {
  const client = new Client({ connectionString: env('REGISTRY_TEST_ADMIN_URL') });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

export async function createTestDatabase(): Promise<TestDatabase> {
  const name = `registry_test_${randomBytes(6).toString('hex')}`;
  const template = env('REGISTRY_TEST_TEMPLATE');
  await admin((c) => c.query(`CREATE DATABASE ${name} TEMPLATE ${template}`));
  return {
    name,
    url: databaseUrl(name),
    appUrl: appDatabaseUrl(name),
    drop: () => admin((c) => c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)).then(() => undefined),
  };
}

/** An empty database (no migrations), for tests of the migration runner itself. */
export async function createEmptyDatabase(): Promise<TestDatabase> {
  const name = `registry_empty_${randomBytes(6).toString('hex')}`;
  await admin((c) => c.query(`CREATE DATABASE ${name}`));
  return {
    name,
    url: databaseUrl(name),
    appUrl: databaseUrl(name),
    drop: () => admin((c) => c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`)).then(() => undefined),
  };
}
