import type { ReportColumn } from './report-catalog';

/** A row as node-postgres returns it in array mode: text, booleans, nulls. */
export type ReportRow = readonly (string | boolean | null)[];

/** Turns batches of rows into bytes; `begin` and `end` frame them. */
export interface RowWriter {
  begin(): Buffer;
  rows(batch: readonly ReportRow[]): Buffer;
  end(): Buffer;
}

const NEEDS_QUOTES = /[",\r\n]/;
const QUOTES = /"/g;

/** One CSV field (RFC 4180): quoted when it holds a comma, a quote or a line break, quotes doubled. */
export function csvField(value: string | boolean | null): string {
  if (value === null) return '';
  if (typeof value === 'boolean') return value ? 'true' : 'false';
  return NEEDS_QUOTES.test(value) ? `"${value.replace(QUOTES, '""')}"` : value;
}

/** RFC 4180: UTF-8 without a byte-order mark, a header row, CRLF after every record. */
export function csvWriter(columns: readonly ReportColumn[]): RowWriter {
  const width = columns.length;
  return {
    begin: () => Buffer.from(`${columns.map((c) => csvField(c.name)).join(',')}\r\n`, 'utf8'),
    rows(batch) {
      let out = '';
      for (const row of batch) {
        let line = csvField(row[0] ?? null);
        for (let i = 1; i < width; i++) line += `,${csvField(row[i] ?? null)}`;
        out += `${line}\r\n`;
      }
      return Buffer.from(out, 'utf8');
    },
    end: () => Buffer.alloc(0),
  };
}

/**
 * Newline-delimited JSON: one object per row, members in column order, `\n` after each.
 * Text is a JSON string (decimals stay strings, as written), booleans are booleans, and
 * stored JSON (inputs, results, audited values) is embedded as it is stored.
 */
export function ndjsonWriter(columns: readonly ReportColumn[]): RowWriter {
  const prefixes = columns.map((c, i) => `${i === 0 ? '{' : ','}${JSON.stringify(c.name)}:`);
  const isJson = columns.map((c) => c.type === 'json');
  return {
    begin: () => Buffer.alloc(0),
    rows(batch) {
      let out = '';
      for (const row of batch) {
        for (let i = 0; i < prefixes.length; i++) {
          const v = row[i] ?? null;
          out += prefixes[i] as string;
          out += v === null ? 'null' : typeof v === 'boolean' ? String(v) : isJson[i] ? v : JSON.stringify(v);
        }
        out += '}\n';
      }
      return Buffer.from(out, 'utf8');
    },
    end: () => Buffer.alloc(0),
  };
}
