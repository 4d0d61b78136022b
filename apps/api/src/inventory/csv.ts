/**
 * A small RFC 4180 reader: comma-separated fields, optional double quotes
 * around a field (then it may hold commas, quotes doubled as "" and line
 * breaks), records ended by CRLF, LF or CR, an optional final line break and
 * an optional UTF-8 byte-order mark. Blank lines are skipped. Everything is
 * text: no type guessing, no trimming.
 */

export class CsvSyntaxError extends Error {
  override readonly name = 'CsvSyntaxError';
  constructor(
    /** Record number, 1 = the header. */
    readonly row: number,
    readonly reason: string,
  ) {
    super(`row ${row}: ${reason}`);
  }
}

const QUOTE = 34;
const COMMA = 44;
const CR = 13;
const LF = 10;

export function parseCsv(input: string): string[][] {
  const records: string[][] = [];
  let record: string[] = [];
  let i = input.charCodeAt(0) === 0xfeff ? 1 : 0;
  const n = input.length;
  const endRecord = () => {
    if (!(record.length === 1 && record[0] === '')) records.push(record);
    record = [];
  };
  while (i <= n) {
    const row = records.length + 1;
    let field: string;
    if (input.charCodeAt(i) === QUOTE) {
      // Quoted field: up to the closing quote; "" stands for one quote.
      let value = '';
      let from = i + 1;
      for (;;) {
        const q = input.indexOf('"', from);
        if (q < 0) throw new CsvSyntaxError(row, 'a quoted field is not closed');
        value += input.slice(from, q);
        if (input.charCodeAt(q + 1) === QUOTE) {
          value += '"';
          from = q + 2;
          continue;
        }
        i = q + 1;
        break;
      }
      const next = input.charCodeAt(i);
      if (i < n && next !== COMMA && next !== CR && next !== LF) {
        throw new CsvSyntaxError(row, 'unexpected text after a closing quote');
      }
      field = value;
    } else {
      let j = i;
      while (j < n) {
        const c = input.charCodeAt(j);
        if (c === COMMA || c === CR || c === LF) break;
        if (c === QUOTE) throw new CsvSyntaxError(row, 'a quote inside an unquoted field (quote the whole field and double the quote)');
        j++;
      }
      field = input.slice(i, j);
      i = j;
    }
    record.push(field);
    if (i >= n) {
      endRecord();
      break;
    }
    const c = input.charCodeAt(i);
    if (c === COMMA) {
      i++;
      continue;
    }
    // CRLF, LF or CR ends the record.
    i += c === CR && input.charCodeAt(i + 1) === LF ? 2 : 1;
    endRecord();
    if (i >= n) break;
  }
  return records;
}
