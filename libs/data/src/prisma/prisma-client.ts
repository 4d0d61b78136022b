import { PrismaPg } from '@prisma/adapter-pg';
import { Pool } from 'pg';

import { PrismaClient } from '../generated/prisma/client';
import { boundStatements, type StatementTimeoutError } from './statement-bound';

export { PrismaClient, Prisma } from '../generated/prisma/client';
export { StatementTimeoutError } from './statement-bound';

/** What the server enforces on every statement of the pool (an export sets its own). */
export const SERVER_STATEMENT_TIMEOUT_MS = 30_000;
/** The client's own bound: a little longer, so that a live server's statement timeout always wins. */
export const DEFAULT_QUERY_TIMEOUT_MS = 35_000;

export interface DatabaseOptions {
  readonly databaseUrl: string;
  /** Pool size; each API replica holds at most this many connections. */
  readonly poolMax?: number;
  /** Milliseconds to wait for a free connection before failing fast. */
  readonly connectionTimeoutMs?: number;
  /**
   * Milliseconds a statement may go unanswered before its connection is closed and it fails (a frozen
   * server enforces no statement timeout of its own). Cursors are not bounded.
   */
  readonly queryTimeoutMs?: number;
  /** Called when an idle pooled connection breaks (e.g. the server restarts). */
  readonly onPoolError?: (err: Error) => void;
  /** Called when a statement went unanswered for `queryTimeoutMs` and its connection was closed. */
  readonly onQueryTimeout?: (err: StatementTimeoutError) => void;
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
    statement_timeout: SERVER_STATEMENT_TIMEOUT_MS,
    application_name: 'glassware-registry',
  });
  // A client losing its server must not crash the process. pg-pool listens on a client only while it is idle
  // (and then re-emits on the pool); one checked out and between statements (an open transaction, a paused
  // export) emits on itself. So every client gets a listener of its own, which reports both cases once; the
  // holder gets the error from its next statement (a 503), and the pool discards the client on release.
  // Every client also gets its statements bounded, so a server that accepts and never answers cannot hold a
  // request, a transaction or a pooled connection for longer than queryTimeoutMs.
  const queryTimeoutMs = options.queryTimeoutMs ?? DEFAULT_QUERY_TIMEOUT_MS;
  pool.on('error', () => undefined);
  pool.on('connect', (client) => {
    client.on('error', (err) => options.onPoolError?.(err));
    boundStatements(client, queryTimeoutMs, options.onQueryTimeout);
  });
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
