import { createHash } from 'node:crypto';
import { Readable } from 'node:stream';

import type { Pool, PoolClient } from 'pg';
import Cursor from 'pg-cursor';

import type { ReportRow, RowWriter } from './row-formats';

/** Rows fetched from the cursor at a time: enough to amortise the round trip, small enough to stay flat in memory. */
export const EXPORT_BATCH_ROWS = 500;
/** The longest an export's query may run: a million rows take about a minute; a client that stalls longer loses the export. */
export const EXPORT_STATEMENT_TIMEOUT_MS = 30 * 60_000;
/** Rows turned into bytes at a time (about 60 KB of CSV for a calibration log). */
const WRITE_SLICE_ROWS = 50;
/** Bytes buffered in the stream before it waits for the client to read them. */
const HIGH_WATER_MARK = 64 * 1024;

export interface ExportQuery {
  /** Tags the statement in pg_stat_activity (`registry-export <id>`). */
  readonly exportId: string;
  readonly sql: string;
  readonly params: readonly unknown[];
  /** Builds the writer on the export's connection, inside its snapshot (the PDF reads its summary counts there). */
  readonly writer: (client: PoolClient) => Promise<RowWriter>;
  /**
   * Called once every byte has been handed over and before the stream ends, so that when the
   * client sees the end of the response the export is already recorded as completed.
   */
  readonly completed?: (outcome: ExportOutcome) => Promise<void>;
}

export interface ExportOutcome {
  readonly rows: number;
  readonly bytes: number;
  /** SHA-256 of every byte produced; null unless the stream ran to its end. */
  readonly sha256: Buffer | null;
}

/**
 * Rows of one report, from PostgreSQL to the client without holding them: one pooled
 * connection, a read-only REPEATABLE READ transaction (every query of the export sees the
 * same snapshot), a cursor read in batches. The next batch is fetched only when the client
 * has taken the previous bytes (the stream's backpressure), and the SHA-256 is computed over
 * the bytes as they go. `cancel()` (the client went away) cancels a fetch in progress on the
 * server; the transaction is rolled back and the connection returned to the pool.
 */
export class ExportStream {
  private client: PoolClient | null = null;
  private backendPid: number | null = null;
  private fetching = false;
  private cancelled = false;
  private cancelling: Promise<unknown> = Promise.resolve();
  private readonly hash = createHash('sha256');
  private rows = 0;
  private bytes = 0;
  private digest: Buffer | null = null;
  private readonly iterator: AsyncGenerator<Buffer, void, undefined>;

  constructor(
    private readonly pool: Pool,
    private readonly query: ExportQuery,
  ) {
    this.iterator = this.generate();
  }

  /**
   * Runs the export up to its first bytes (opens the snapshot, the cursor, the first batch),
   * so that a failure before anything was sent is still an error response; then the stream.
   */
  async open(): Promise<Readable> {
    const first = await this.iterator.next();
    const rest = this.iterator;
    async function* all(): AsyncGenerator<Buffer, void, undefined> {
      if (!first.done) yield first.value;
      yield* rest;
    }
    return Readable.from(all(), { objectMode: false, highWaterMark: HIGH_WATER_MARK });
  }

  outcome(): ExportOutcome {
    return { rows: this.rows, bytes: this.bytes, sha256: this.digest };
  }

  /** The client went away: stop the query running for this export, if one is. */
  cancel(): Promise<unknown> {
    if (this.cancelled) return this.cancelling;
    this.cancelled = true;
    if (this.fetching && this.backendPid !== null) {
      this.cancelling = this.pool.query('SELECT pg_cancel_backend($1)', [this.backendPid]).catch(() => undefined);
    }
    // A generator waiting at a yield ends here; one waiting for a fetch ends when the cancel reaches it.
    void this.iterator.return(undefined).catch(() => undefined);
    return this.cancelling;
  }

  /**
   * A batch written a slice at a time: each slice's text stays small enough for the young
   * generation of the JavaScript heap (a string of a whole batch would go straight to the old
   * generation, which grows the process before it is collected).
   */
  private *write(writer: RowWriter, batch: readonly ReportRow[]): Generator<Buffer, void, undefined> {
    for (let i = 0; i < batch.length; i += WRITE_SLICE_ROWS) yield* this.emit(writer.rows(batch.slice(i, i + WRITE_SLICE_ROWS)));
  }

  private *emit(chunk: Buffer): Generator<Buffer, void, undefined> {
    if (chunk.length === 0) return;
    this.hash.update(chunk);
    this.bytes += chunk.length;
    yield chunk;
  }

  private async *generate(): AsyncGenerator<Buffer, void, undefined> {
    const client = await this.pool.connect();
    this.client = client;
    let cursor: Cursor<ReportRow> | null = null;
    let finished = false;
    let released = false;
    let broken: Error | undefined;
    try {
      await client.query('BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY');
      // The pool's 30 s statement timeout covers one request's query; an export's cursor is one statement for as long as
      // the client reads.
      await client.query(`SET LOCAL statement_timeout = ${EXPORT_STATEMENT_TIMEOUT_MS}`);
      this.backendPid = (await client.query<{ pid: number }>('SELECT pg_backend_pid() AS pid')).rows[0]?.pid ?? null;
      const writer = await this.query.writer(client);
      cursor = client.query(
        new Cursor<ReportRow>(`/* registry-export ${this.query.exportId} */ ${this.query.sql}`, [...this.query.params], {
          rowMode: 'array',
        }),
      );
      let batch = await this.fetch(cursor);
      yield* this.emit(writer.begin());
      yield* this.write(writer, batch);
      while (batch.length > 0) {
        batch = await this.fetch(cursor);
        yield* this.write(writer, batch);
      }
      yield* this.emit(writer.end());
      await cursor.close();
      cursor = null;
      await client.query('COMMIT');
      finished = true;
      this.digest = this.hash.digest();
      this.client = null;
      client.release();
      released = true;
      await this.query.completed?.(this.outcome());
    } finally {
      this.fetching = false;
      if (!finished) {
        await this.cancelling;
        await cursor?.close().catch(() => undefined);
        await client.query('ROLLBACK').catch((err: Error) => {
          broken = err;
        });
      }
      if (!released) {
        this.client = null;
        client.release(broken);
      }
    }
  }

  private async fetch(cursor: Cursor<ReportRow>): Promise<ReportRow[]> {
    if (this.cancelled) throw new Error('export cancelled: the client went away');
    this.fetching = true;
    try {
      const rows = await cursor.read(EXPORT_BATCH_ROWS);
      this.rows += rows.length;
      return rows;
    } finally {
      this.fetching = false;
    }
  }
}
