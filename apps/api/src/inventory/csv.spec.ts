import { CsvSyntaxError, parseCsv } from './csv';

describe('parseCsv (RFC 4180)', () => {
  it('reads plain records with CRLF, LF or CR line ends and an optional final line break', () => {
    expect(parseCsv('a,b\r\n1,2\r\n')).toEqual([
      ['a', 'b'],
      ['1', '2'],
    ]);
    expect(parseCsv('a,b\n1,2')).toEqual([
      ['a', 'b'],
      ['1', '2'],
    ]);
    expect(parseCsv('a,b\r1,2\r')).toEqual([
      ['a', 'b'],
      ['1', '2'],
    ]);
  });

  it('keeps empty fields, including a trailing one', () => {
    expect(parseCsv('a,,c\n,,\nx,')).toEqual([
      ['a', '', 'c'],
      ['', '', ''],
      ['x', ''],
    ]);
  });

  it('reads quoted fields holding commas, doubled quotes and line breaks', () => {
    expect(parseCsv('tag,notes\r\nVF-100-017,"Room 2.14, shelf ""B""\r\nsecond line"\r\n')).toEqual([
      ['tag', 'notes'],
      ['VF-100-017', 'Room 2.14, shelf "B"\r\nsecond line'],
    ]);
    expect(parseCsv('"",""')).toEqual([['', '']]);
  });

  it('skips a byte-order mark and blank lines', () => {
    expect(parseCsv('\uFEFFa\n\n1\n\n')).toEqual([['a'], ['1']]);
    expect(parseCsv('')).toEqual([]);
  });

  it('does not trim or interpret fields', () => {
    expect(parseCsv(' 25 , 0.030 ')).toEqual([[' 25 ', ' 0.030 ']]);
  });

  it.each([
    ['a\n"open', 2, /not closed/],
    ['a\n"x"y', 2, /after a closing quote/],
    ['a\nb"c', 2, /quote inside an unquoted field/],
  ])('refuses %p naming the record', (input, row, reason) => {
    try {
      parseCsv(input);
      throw new Error('accepted');
    } catch (error) {
      expect(error).toBeInstanceOf(CsvSyntaxError);
      expect((error as CsvSyntaxError).row).toBe(row);
      expect((error as CsvSyntaxError).reason).toMatch(reason);
    }
  });
});
