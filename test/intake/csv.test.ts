import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { CsvRecordReader, detectDelimiter } from '../../src/intake/csv.js';
import { readPlotFile } from '../../src/intake/index.js';
import { isMissingText, parseDecimal } from '../../src/intake/numbers.js';
import { decodeText } from '../../src/intake/text.js';
import { csvCell, MAPPING, problemsOf, brief, toCsv, validRows, writeTemp } from './helpers.js';

function records(text: string, delimiter = ','): string[][] {
  const r = new CsvRecordReader(text, delimiter);
  const out: string[] = [];
  const all: string[][] = [];
  while (r.next(out) !== 0) all.push([...out]);
  return all;
}

describe('CSV records (RFC 4180)', () => {
  it('handles quoted delimiters, doubled quotes and line breaks inside quotes', () => {
    const text = 'a,b,c\r\n"x, y","say ""hi""","two\nlines"\r\nplain, spaced ,""\n';
    expect(records(text)).toEqual([
      ['a', 'b', 'c'],
      ['x, y', 'say "hi"', 'two\nlines'],
      ['plain', 'spaced', ''],
    ]);
  });

  it('numbers records as a spreadsheet numbers rows, blank lines included', () => {
    const r = new CsvRecordReader('h1,h2\n\n"a\nb",1\nc,2', ',');
    const out: string[] = [];
    const seen: [number, string[]][] = [];
    for (let n = r.next(out); n !== 0; n = r.next(out)) seen.push([n, [...out]]);
    expect(seen).toEqual([
      [1, ['h1', 'h2']],
      [2, ['']],
      [3, ['a\nb', '1']],
      [4, ['c', '2']],
    ]);
  });

  it('keeps a trailing empty field and reports an unclosed quote without looping', () => {
    expect(records('a,b,\n')).toEqual([['a', 'b', '']]);
    const r = new CsvRecordReader('a,b\n1,"open\n2,3\n', ',');
    const out: string[] = [];
    r.next(out);
    expect(r.next(out)).toBe(2);
    expect(out).toEqual(['1', 'open\n2,3\n']);
    expect(r.next(out)).toBe(0);
    expect(r.unterminatedQuoteRecord).toBe(2);
  });

  it('detects , ; tab and | from the header, ignoring quoted ones', () => {
    expect(detectDelimiter('a,b,c\n1;2', false)).toBe(',');
    expect(detectDelimiter('a;b;c\n1,2', false)).toBe(';');
    expect(detectDelimiter('a\tb\tc', false)).toBe('\t');
    expect(detectDelimiter('a|b|c', false)).toBe('|');
    expect(detectDelimiter('"a;b;c",d', false)).toBe(',');
    expect(detectDelimiter('single', false)).toBe(',');
    // With a decimal comma the comma is never the delimiter; ';' is the default.
    expect(detectDelimiter('single', true)).toBe(';');
    expect(detectDelimiter('a,b\tc\td', true)).toBe('\t');
  });

  it('decodes UTF-8 with BOM, and UTF-16LE with BOM', () => {
    const utf8 = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from('sité,y\n', 'utf8')]);
    expect(decodeText(utf8)).toBe('sité,y\n');
    const utf16 = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('a\tb\n', 'utf16le')]);
    expect(decodeText(utf16)).toBe('a\tb\n');
  });

  // Property: any table of cells written with RFC 4180 quoting, any delimiter and line end,
  // reads back cell for cell. Unquoted cells are trimmed by design, so cells that would be
  // written unquoted carry no blanks at their ends. numRuns: 500.
  it('round-trips random tables (fast-check, 500 runs)', () => {
    const cell = fc.oneof(
      fc.string({ maxLength: 12 }),
      fc.constantFrom('', '"', '""', ',', ';', '\t', '|', '\n', '\r\n', 'a b', '12,4', 'é'),
    );
    fc.assert(
      fc.property(
        fc.array(fc.array(cell, { minLength: 2, maxLength: 6 }), { minLength: 1, maxLength: 20 }),
        fc.constantFrom(',', ';', '\t', '|'),
        fc.constantFrom('\n', '\r\n'),
        (table, delimiter, eol) => {
          const width = table[0].length;
          const rows = table.map((r) => Array.from({ length: width }, (_, i) => r[i] ?? 'x'));
          const text = rows
            .map((r) => r.map((c) => (c === '' || c.trim() !== c || c.includes('\r') ? `"${c.replace(/"/g, '""')}"` : csvCell(c, delimiter))).join(delimiter))
            .join(eol);
          expect(records(text + eol, delimiter)).toEqual(rows);
          // The in-place cell methods agree with the cell text.
          const reader = new CsvRecordReader(text + eol, delimiter);
          for (const row of rows) {
            expect(reader.advance()).toBeGreaterThan(0);
            expect(reader.count).toBe(row.length);
            row.forEach((cellText, i) => {
              expect(reader.equals(i, cellText)).toBe(true);
              expect(reader.equals(i, `${cellText}x`)).toBe(false);
              expect(reader.isEmpty(i)).toBe(cellText === '');
              expect(reader.isMissing(i)).toBe(isMissingText(cellText));
              expect(Object.is(reader.number(i, 'point'), parseDecimal(cellText, 'point'))).toBe(true);
            });
            expect(reader.equals(row.length, '')).toBe(true);
            expect(reader.text(-1)).toBe('');
          }
          expect(reader.advance()).toBe(0);
        },
      ),
      { numRuns: 500, seed: 20261201 },
    );
  });
});

describe('CSV dialects through readPlotFile', () => {
  const rows = validRows();
  const expected = rows.map((r) => Number(r[6]));
  const valuesOf = async (text: string | Uint8Array, extra: Partial<typeof MAPPING> = {}): Promise<(number | null)[]> =>
    (await readPlotFile(writeTemp('dialect.csv', text), { ...MAPPING, ...extra })).observations.map((o) => o.value);

  it('reads ; tab and | files with the delimiter detected', async () => {
    for (const d of [';', '\t', '|']) expect(await valuesOf(toCsv(rows, undefined, d))).toEqual(expected);
  });

  it('reads CRLF line ends and a UTF-8 byte-order mark', async () => {
    const text = toCsv(rows, undefined, ',', '\r\n');
    expect(await valuesOf(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(text)]))).toEqual(expected);
  });

  it('reads a decimal comma when the mapping says so (";" by default)', async () => {
    const text = toCsv(rows.map((r) => [...r.slice(0, 6), r[6].replace('.', ',')]), undefined, ';');
    expect(await valuesOf(text, { decimalComma: true })).toEqual(expected);
    // Without the option, "5,23" is not a number; the message points at the option.
    const p = await problemsOf(() => readPlotFile(writeTemp('dc.csv', text), MAPPING));
    expect(p[0].rule).toBe('not-a-number');
    expect(p[0].row).toBe(2);
    expect(p[0].column).toBe('yield');
  });

  it('honours an explicit delimiter', async () => {
    const text = toCsv(rows, undefined, '|').replace('site|year', 'site|year'); // header has no other candidate
    expect(await valuesOf(text, { delimiter: '|' })).toEqual(expected);
    const p = await problemsOf(() => readPlotFile(writeTemp('wrongdelim.csv', text), { ...MAPPING, delimiter: ';' }));
    expect(p[0].rule).toBe('missing-column');
    expect(p[0].row).toBe(1);
  });

  it('"12,4x" unquoted in a ;-file with decimal comma is not a number, on its row', async () => {
    const r = rows.map((x) => [...x.slice(0, 6), x[6].replace('.', ',')]);
    r[15][6] = '12,4x';
    const p = await problemsOf(() => readPlotFile(writeTemp('dc17.csv', toCsv(r, undefined, ';')), { ...MAPPING, decimalComma: true }));
    expect(brief(p)).toEqual([['not-a-number', 17, 'yield', '12,4x']]);
  });
});
