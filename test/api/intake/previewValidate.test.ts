// data.preview and data.validate: header, first rows, sheets and a guessed mapping; every
// problem with file, row, column, value and rule; nothing ever stored.
import { describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { api } from '../../../src/api/handlers.js';
import { guessMapping } from '../../../src/api/intake/guessMapping.js';
import { buildXlsx } from '../../intake/xlsxBuilder.js';
import { MAPPING, toCsv, validRows, setCell, HEADER } from '../../intake/helpers.js';
import { data, demoCopy, scratchDir } from '../support/demoWorkspace.js';

function file(name: string, content: string | Uint8Array): string {
  const path = join(scratchDir(), name);
  writeFileSync(path, content);
  return path;
}

describe('data.preview', () => {
  it('shows a CSV file: header, at most 20 rows (empty cells null), the row count and a guessed mapping', async () => {
    const rows = validRows(['North', 'South'], ['2021', '2022'], 2); // 40 rows
    rows[0][5] = '';
    const p = data(await api['data.preview']({ file: file('plots.csv', toCsv(rows)) }));
    expect(p).toMatchObject({ format: 'csv', sheets: [], sheet: null, header: HEADER, rowCount: 40 });
    expect(p.rows).toHaveLength(20);
    expect(p.rows[0]).toEqual(['North', '2021', '1', 'CTL', null, null, rows[0][6]]);
    expect(p.guess.columns).toEqual({ site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate', timing: 'timing' } });
  });

  it('lists the sheets of a workbook and shows the one asked for', async () => {
    const path = file('book.xlsx', buildXlsx([
      { name: 'Notes', rows: [['written by hand']] },
      { name: 'Plots', rows: [['Site', 'Year', 'Rep', 'Trt', 'N rate (kg/ha)', 'Yield (t/ha)'], ['A', 2020, 1, 'CTL', 0, 5.1], ['A', 2020, 1, 'N1', 40, 6.2]] },
    ]));
    const first = data(await api['data.preview']({ file: path }));
    expect(first).toMatchObject({ format: 'xlsx', sheets: ['Notes', 'Plots'], sheet: 'Notes', header: ['written by hand'], rowCount: 0 });
    const plots = data(await api['data.preview']({ file: path, sheet: 'Plots' }));
    expect(plots).toMatchObject({ sheet: 'Plots', rowCount: 2, rows: [['A', '2020', '1', 'CTL', '0', '5.1'], ['A', '2020', '1', 'N1', '40', '6.2']] });
    expect(plots.guess).toEqual({
      columns: { site: 'Site', year: 'Year', block: 'Rep', treatment: 'Trt', response: 'Yield (t/ha)', factors: { n_rate: 'N rate (kg/ha)' } },
      trait: { name: 'yield', unit: 't/ha' },
    });
    expect(await api['data.preview']({ file: path, sheet: 'Nope' })).toMatchObject({ ok: false, error: { code: 'invalid-input' } });
  });

  it('guesses nothing it cannot recognise', () => {
    expect(guessMapping(['a', 'b', 'c'])).toEqual({ columns: {} });
  });
});

describe('data.validate', () => {
  it('reports every problem with file name, row, column, value and rule, and stores nothing', async () => {
    const rows = validRows();
    setCell(rows, 3, 'yield', 'abc');
    setCell(rows, 7, 'rate', '-5x');
    const path = file('bad.csv', toCsv(rows));
    const workspace = await demoCopy();
    const before = readFileSync(workspace);
    const r = data(await api['data.validate']({ workspace, file: path, mapping: MAPPING }));
    expect(r.valid).toBe(false);
    expect(r.truncated).toBe(false);
    expect(r.summary).toEqual({ sites: 0, trials: 0, plots: 0, traits: [] });
    const brief = r.problems.map((p) => [p.file, p.row, p.column, p.value, p.rule]);
    expect(brief).toContainEqual(['bad.csv', 3, 'yield', 'abc', expect.any(String)]);
    expect(brief).toContainEqual(['bad.csv', 7, 'rate', '-5x', expect.any(String)]);
    for (const p of r.problems) expect(p.message.length).toBeGreaterThan(5);
    expect(readFileSync(workspace).equals(before)).toBe(true);
  });

  it('summarises a valid file, and flags a file already imported and trials already held', async () => {
    const path = file('good.csv', toCsv(validRows()));
    const workspace = await demoCopy();
    const fresh = data(await api['data.validate']({ workspace: join(scratchDir(), 'not-yet.manyfield'), file: path, mapping: MAPPING }));
    expect(fresh).toEqual({ valid: true, problems: [], truncated: false, summary: { sites: 2, trials: 4, plots: 40, traits: ['yield'] } });
    expect(data(await api['data.validate']({ workspace, file: path, mapping: MAPPING })).valid).toBe(true);
    data(await api['data.import']({ workspace, file: path, mapping: MAPPING }));
    const again = data(await api['data.validate']({ workspace, file: path, mapping: MAPPING }));
    expect(again.valid).toBe(false);
    expect(again.problems.map((p) => p.rule)).toEqual(['duplicate-file', 'trial-exists', 'trial-exists', 'trial-exists', 'trial-exists']);
    expect(again.problems[1]).toMatchObject({ file: 'good.csv', row: 2, value: 'North-2021' });
  });
});
