import { pipeline } from 'node:stream/promises';
import { Readable } from 'node:stream';

import type { Client } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';

/** Text already escaped for COPY (large JSON assembled from escaped parts: not scanned again). */
export class CopyText {
  constructor(readonly text: string) {}
}

/** A value of a COPY row: null is NULL; Dates are written as ISO instants; objects as JSON. */
export type CopyValue = string | number | boolean | Date | null | CopyText | object;

const ESCAPES: Record<string, string> = { '\\': '\\\\', '\n': '\\n', '\r': '\\r', '\t': '\\t' };

/** Text in COPY's text format: backslash, newline, carriage return and tab escaped. */
export function escapeCopy(text: string): string {
  return /[\\\n\r\t]/.test(text) ? text.replace(/[\\\n\r\t]/g, (c) => ESCAPES[c] as string) : text;
}

/** One field in PostgreSQL's COPY text format. */
export function copyField(value: CopyValue): string {
  if (value === null) return '\\N';
  if (typeof value === 'number') return String(value);
  if (typeof value === 'boolean') return value ? 't' : 'f';
  if (value instanceof Date) return value.toISOString();
  if (value instanceof CopyText) return value.text;
  return escapeCopy(typeof value === 'string' ? value : JSON.stringify(value));
}

const CHUNK_CHARS = 1 << 20;

/**
 * Streams rows into `table` with COPY FROM STDIN. Constraints, indexes and triggers all apply
 * (COPY fires row triggers as INSERT does). Rows are produced lazily, in chunks of about 1 MB.
 */
export async function copyRows(
  client: Client,
  table: string,
  columns: readonly string[],
  rows: Iterable<readonly CopyValue[]>,
  onRows?: (n: number) => void,
): Promise<number> {
  let count = 0;
  function* chunks(): Generator<string> {
    let buffer = '';
    let pending = 0;
    for (const row of rows) {
      buffer += `${row.map(copyField).join('\t')}\n`;
      count += 1;
      pending += 1;
      if (buffer.length >= CHUNK_CHARS) {
        yield buffer;
        onRows?.(pending);
        buffer = '';
        pending = 0;
      }
    }
    if (buffer.length > 0) yield buffer;
    if (pending > 0) onRows?.(pending);
  }
  const started = Date.now();
  const sink = client.query(copyFrom(`COPY ${table} (${columns.join(', ')}) FROM STDIN`));
  await pipeline(Readable.from(chunks(), { objectMode: false }), sink);
  const t = COPY_TIMES.get(table) ?? { rows: 0, ms: 0 };
  COPY_TIMES.set(table, { rows: t.rows + count, ms: t.ms + Date.now() - started });
  return count;
}

/** Rows and wall time (generation included) of every COPY so far, per table. */
export const COPY_TIMES = new Map<string, { rows: number; ms: number }>();

/** Rows as COPY text, in chunks of about 1 MB, built ahead so that streaming them costs little. */
export interface CopyChunks {
  readonly chunks: readonly string[];
  readonly count: number;
}

export function serializeRows(rows: Iterable<readonly CopyValue[]>): CopyChunks {
  const chunks: string[] = [];
  let buffer = '';
  let count = 0;
  for (const row of rows) {
    buffer += `${row.map(copyField).join('\t')}\n`;
    count += 1;
    if (buffer.length >= CHUNK_CHARS) {
      chunks.push(buffer);
      buffer = '';
    }
  }
  if (buffer.length > 0) chunks.push(buffer);
  return { chunks, count };
}

/** COPY of rows serialized ahead (see serializeRows). */
export async function copyChunks(client: Client, table: string, columns: readonly string[], data: CopyChunks): Promise<void> {
  const started = Date.now();
  const sink = client.query(copyFrom(`COPY ${table} (${columns.join(', ')}) FROM STDIN`));
  await pipeline(Readable.from(data.chunks, { objectMode: false }), sink);
  const t = COPY_TIMES.get(table) ?? { rows: 0, ms: 0 };
  COPY_TIMES.set(table, { rows: t.rows + data.count, ms: t.ms + Date.now() - started });
}
