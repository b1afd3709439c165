import { strToU8, zipSync } from 'fflate';
import { describe, expect, it } from 'vitest';
import { readPlotFile } from '../../src/intake/index.js';
import { columnIndexOfRef, readXlsxSheet } from '../../src/intake/xlsx.js';
import { brief, HEADER, MAPPING, problemsOf, validRows, writeTemp } from './helpers.js';
import { buildXlsx, columnName, type CellValue } from './xlsxBuilder.js';

/** validRows() with numeric cells stored as numbers, as a spreadsheet would. */
function sheetRows(): CellValue[][] {
  return validRows().map((r) => r.map((c, i) => (c === '' ? null : i === 1 || i === 2 || i === 4 || i === 6 ? Number(c) : c)));
}

describe('XLSX reading', () => {
  const expected = validRows().map((r) => Number(r[6]));

  it('reads the first sheet with shared strings, numbers and empty cells', async () => {
    const bytes = buildXlsx([
      { name: 'Plots', rows: [HEADER, ...sheetRows()] },
      { name: 'Notes', rows: [['nothing here']] },
    ]);
    const t = await readPlotFile(writeTemp('plots.xlsx', bytes), MAPPING);
    expect(t.observations.map((o) => o.value)).toEqual(expected);
    // The control's blank rate follows the one rule: 0, it received none of the input.
    expect(t.treatments[0]).toEqual({ code: 'CTL', levels: { rate: 0, timing: null } });
    expect(t.trials.map((x) => x.key)).toEqual(['North-2021', 'North-2022', 'South-2021', 'South-2022']);
  });

  it('reads a named sheet with inline strings', async () => {
    const bytes = buildXlsx(
      [
        { name: 'Cover', rows: [['Trial network 2021-22'], ['see sheet "Trial data"']] },
        { name: 'Trial data', rows: [HEADER, ...sheetRows()] },
      ],
      false,
    );
    const t = await readPlotFile(writeTemp('named.xlsx', bytes), { ...MAPPING, sheet: 'Trial data' });
    expect(t.observations.map((o) => o.value)).toEqual(expected);
  });

  it('names the sheets when the requested one is missing', async () => {
    const bytes = buildXlsx([{ name: 'Plots', rows: [HEADER, ...sheetRows()] }]);
    const p = await problemsOf(() => readPlotFile(writeTemp('nosheet.xlsx', bytes), { ...MAPPING, sheet: 'Yield' }));
    expect(brief(p)).toEqual([['bad-xlsx', 0, null, 'Yield']]);
    expect(p[0].message).toContain('"Plots"');
  });

  it('reports problems with the row numbers the spreadsheet shows', async () => {
    const rows = sheetRows();
    rows[15][6] = '12,4x'; // spreadsheet row 17 when the header is on row 1
    const p = await problemsOf(() => readPlotFile(writeTemp('bad.xlsx', buildXlsx([{ name: 'S', rows: [HEADER, ...rows] }])), MAPPING));
    expect(brief(p)).toEqual([['not-a-number', 17, 'yield', '12,4x']]);
    // The same table starting on row 4 (a title block above it): the problem moves to row 20.
    const shifted = buildXlsx([{ name: 'S', rows: [HEADER, ...rows], firstRow: 4 }]);
    const q = await problemsOf(() => readPlotFile(writeTemp('shifted.xlsx', shifted), MAPPING));
    expect(brief(q)).toEqual([['not-a-number', 20, 'yield', '12,4x']]);
  });

  it('refuses an old binary .xls file with a clear message', async () => {
    const ole2 = new Uint8Array([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0, 0, 0]);
    const p = await problemsOf(() => readPlotFile(writeTemp('old.xls', ole2), MAPPING));
    expect(brief(p)).toEqual([['unsupported-format', 0, null, null]]);
  });

  it('places cells by their reference, so gaps land in the right columns', () => {
    const row: CellValue[] = [];
    row[0] = 'a';
    row[2] = 3.5;
    row[27] = true; // column AB
    const bytes = buildXlsx([{ name: 'S', rows: [Array.from({ length: 28 }, (_, i) => row[i] ?? null)] }]);
    const data = readXlsxSheet(bytes);
    expect(data.rows[0].row).toBe(1);
    expect(data.rows[0].cells.length).toBe(28);
    expect(data.rows[0].cells[0]).toBe('a');
    expect(data.rows[0].cells[1]).toBe('');
    expect(data.rows[0].cells[2]).toBe('3.5');
    expect(data.rows[0].cells[27]).toBe('TRUE');
    expect(columnIndexOfRef('AB12')).toBe(27);
    expect(columnIndexOfRef('XFD1')).toBe(16383);
    expect(columnName(16383)).toBe('XFD');
  });

  it('joins rich-text runs, skips phonetic runs, decodes entities and prefixed tags', () => {
    const files = {
      '_rels/.rels': strToU8('<Relationships><Relationship Id="r1" Type="x/officeDocument" Target="xl/workbook.xml"/></Relationships>'),
      'xl/workbook.xml': strToU8('<x:workbook xmlns:x="m" xmlns:rel="r"><x:sheets><x:sheet name="A &amp; B" sheetId="1" rel:id="s1"/></x:sheets></x:workbook>'),
      'xl/_rels/workbook.xml.rels': strToU8(
        '<Relationships><Relationship Id="s1" Type="x/worksheet" Target="/xl/worksheets/data.xml"/><Relationship Id="s2" Type="x/sharedStrings" Target="strings.xml"/></Relationships>',
      ),
      'xl/strings.xml': strToU8('<sst><si><r><t>Fert</t></r><r><t xml:space="preserve">ilised &lt;N&gt;</t></r><rPh><t>ignored</t></rPh></si><si/></sst>'),
      'xl/worksheets/data.xml': strToU8(
        '<x:worksheet><x:sheetData><x:row r="2"><x:c r="B2" t="s"><x:v>0</x:v></x:c><x:c r="C2" t="s"><x:v>1</x:v></x:c><x:c r="D2" t="str"><x:v>&#233;t&#xE9;</x:v></x:c><x:c r="E2" t="inlineStr"><x:is><x:t><![CDATA[a<b]]></x:t></x:is></x:c></x:row></x:sheetData></x:worksheet>',
      ),
    };
    const data = readXlsxSheet(zipSync(files), 'A & B');
    expect(data.sheetName).toBe('A & B');
    expect(data.rows).toEqual([{ row: 2, cells: ['', 'Fertilised <N>', '', 'été', 'a<b'] }]);
  });
});
