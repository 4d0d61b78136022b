import { parseCsv } from '../inventory/csv';
import { csvField, csvWriter, ndjsonWriter } from './row-formats';

const columns = [
  { name: 'asset_tag', type: 'text' as const },
  { name: 'passed', type: 'boolean' as const },
  { name: 'results', type: 'json' as const },
];

describe('CSV fields (RFC 4180)', () => {
  it('quotes a field holding a comma, a quote or a line break, doubling the quotes', () => {
    expect(csvField('PIP-25-001')).toBe('PIP-25-001');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "when"')).toBe('"say ""when"""');
    expect(csvField('line\r\nbreak')).toBe('"line\r\nbreak"');
    expect(csvField(null)).toBe('');
    expect(csvField(false)).toBe('false');
  });

  it('reads back with an independent RFC 4180 reader as written', () => {
    const w = csvWriter(columns);
    const rows = [
      ['VF-100, "chipped"\nrim', true, '{"meanVolumeMl": "99.98"}'],
      ['µ±°', null, null],
    ] as const;
    const text = Buffer.concat([w.begin(), w.rows(rows), w.end()]).toString('utf8');
    expect(text.endsWith('\r\n')).toBe(true);
    expect(parseCsv(text)).toEqual([
      ['asset_tag', 'passed', 'results'],
      ['VF-100, "chipped"\nrim', 'true', '{"meanVolumeMl": "99.98"}'],
      ['µ±°', '', ''],
    ]);
  });
});

describe('NDJSON', () => {
  it('writes one object per line: text as strings, booleans as booleans, stored JSON embedded', () => {
    const w = ndjsonWriter(columns);
    const text = w
      .rows([
        ['PIP-25-001', false, '{"points": [1, 2]}'],
        ['line\nbreak', null, null],
      ])
      .toString('utf8');
    const lines = text.split('\n');
    expect(lines).toHaveLength(3);
    expect(lines[2]).toBe('');
    expect(lines.slice(0, 2).map((l) => JSON.parse(l) as unknown)).toEqual([
      { asset_tag: 'PIP-25-001', passed: false, results: { points: [1, 2] } },
      { asset_tag: 'line\nbreak', passed: null, results: null },
    ]);
  });
});
