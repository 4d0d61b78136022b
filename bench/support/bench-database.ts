import { randomBytes } from 'node:crypto';
import path from 'node:path';

import { type DatabaseServer, openDatabaseServer } from '@registry/data';
import { Client } from 'pg';

/** A fresh database: a new one on the DATABASE_URL server (dropped on close), or an embedded server in a temporary folder. */
export async function openBenchDatabase(tmp: string): Promise<{ server: DatabaseServer; close: () => Promise<void> }> {
  const external = process.env.DATABASE_URL;
  if (!external) {
    const server = await openDatabaseServer({ dataDir: path.join(tmp, 'cluster') });
    return { server, close: () => server.stop() };
  }
  const name = `registry_bench_${randomBytes(4).toString('hex')}`;
  const admin = async (sql: string) => {
    const c = new Client({ connectionString: process.env.DATABASE_MIGRATION_URL ?? external });
    await c.connect();
    await c.query(sql).finally(() => c.end());
  };
  await admin(`CREATE DATABASE ${name}`);
  const url = new URL(process.env.DATABASE_MIGRATION_URL ?? external);
  url.pathname = `/${name}`;
  const server = await openDatabaseServer({ url: url.toString(), dataDir: tmp });
  return { server, close: () => admin(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`) };
}
