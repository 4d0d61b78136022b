import { PrismaPg } from '@prisma/adapter-pg';
import { Pool } from 'pg';

import { PrismaClient } from '../generated/prisma/client';

export { PrismaClient, Prisma } from '../generated/prisma/client';

export interface DatabaseOptions {
  readonly databaseUrl: string;
  /** Pool size; each API replica holds at most this many connections. */
  readonly poolMax?: number;
  /** Milliseconds to wait for a free connection before failing fast. */
  readonly connectionTimeoutMs?: number;
  /** Called when an idle pooled connection breaks (e.g. the server restarts). */
  readonly onPoolError?: (err: Error) => void;
}

/** One node-postgres pool and the Prisma client that uses it (no native query engine). */
export interface Database {
  readonly prisma: PrismaClient;
  readonly pool: Pool;
  close(): Promise<void>;
}

export function createDatabase(options: DatabaseOptions): Database {
  const pool = new Pool({
    connectionString: options.databaseUrl,
    max: options.poolMax ?? 10,
    connectionTimeoutMillis: options.connectionTimeoutMs ?? 5_000,
    idleTimeoutMillis: 30_000,
    statement_timeout: 30_000,
    application_name: 'glassware-registry',
  });
  // A client losing its server must not crash the process. pg-pool listens on a client only while it is idle
  // (and then re-emits on the pool); one checked out and between statements (an open transaction, a paused
  // export) emits on itself. So every client gets a listener of its own, which reports both cases once; the
  // holder gets the error from its next statement (a 503), and the pool discards the client on release.
  pool.on('error', () => undefined);
  pool.on('connect', (client) => client.on('error', (err) => options.onPoolError?.(err)));
  const prisma = new PrismaClient({ adapter: new PrismaPg(pool) });
  return {
    prisma,
    pool,
    async close() {
      await prisma.$disconnect();
      if (!pool.ended) await pool.end();
    },
  };
}
