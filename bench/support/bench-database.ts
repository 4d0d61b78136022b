import { randomBytes } from 'node:crypto';
import { existsSync } from 'node:fs';
import path from 'node:path';

import { type DatabaseServer, openDatabaseServer } from '@registry/data';
import { Client } from 'pg';

/** The folder holding package.json above `from` (benchmarks run from dist/ as well as from source). */
export function repoRoot(from: string): string {
  let dir = path.resolve(from);
  while (!existsSync(path.join(dir, 'package.json'))) {
    const parent = path.dirname(dir);
    if (parent === dir) throw new Error(`no package.json above ${from}`);
    dir = parent;
  }
  return dir;
}

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
