// Finding 8 of the new-user trial: the mapping and what import says. Every mapping key is in
// `import --help` (and the README); an unknown key lists the valid ones with the closest; a
// decimal comma, or a workbook whose first sheet is notes, gets a hint naming the option; NA,
// n/a, ".", "-" and empty all mean missing; every command has its own --help; and a value far
// outside its trial's spread (81 t/ha in a wheat trial around 8) is listed at import with its
// row and column — refused outright where the trait has bounds.
import { describe, expect, it, beforeAll } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { importMappingSchema } from '../../src/intake/types.js';
import { columnsSchema } from '../../src/spec/analysisSpec.js';
import { MAPPING_KEYS } from '../../src/intake/mappingKeys.js';
import { buildXlsx } from '../intake/xlsxBuilder.js';
import { nitrogenColumns, nitrogenCsv, nitrogenMapping, writeNitrogenCsv, type PlotLine } from '../support/nitrogenNetwork.js';
import { analyzeJson, writeJson } from './support.js';

/** Columns only a per-trial summary file has (analyze --data pools them); not plot-file mapping keys. */
const SUMMARY_ONLY = new Set(['estimate', 'se', 'df']);

describe('import: the mapping documented, hints where they help, a plausibility screen', () => {
  const dir = tempDir();
  const map = writeJson(dir, 'map.json', nitrogenMapping());

  it('every mapping key is described in `import --help` and in the README', () => {
    const r = manyfield(['import', '--help']);
    expect(r.status).toBe(0);
    const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    const keys = [
      ...Object.keys(importMappingSchema.shape).filter((k) => k !== 'columns'),
      ...Object.keys(columnsSchema.shape).filter((k) => !SUMMARY_ONLY.has(k)).map((k) => `columns.${k}`),
    ];
    const documented = MAPPING_KEYS.flatMap((d) => d.key.split(', '));
    for (const key of keys) {
      expect(documented, `MAPPING_KEYS lacks ${key}`).toContain(key);
      expect(r.stdout, `import --help lacks ${key}`).toContain(key);
      expect(readme, `README lacks ${key}`).toContain(`\`${key}\``);
    }
    expect(r.stdout).toMatch(/NA, n\/a \(any case\), "\." or "-"/);
  });

  it('every command has its own --help', () => {
    for (const command of ['demo', 'import', 'trials', 'export', 'analyze']) {
      const r = manyfield([command, '--help']);
      expect(r.status).toBe(0);
      expect(r.stdout.startsWith(`manyfield ${command} `)).toBe(true);
    }
    const wrong = manyfield(['import', '--workspace', 'x', '--flie', 'y']);
    expect(wrong.status).toBe(2);
    expect(wrong.stderr).toMatch(/Run "manyfield import --help"/);
  });

  it('an unknown mapping key lists the valid keys and the closest', () => {
    const m = writeJson(dir, 'typo-map.json', { ...nitrogenMapping(), decimalcomma: true });
    const data = join(dir, 'plain.csv');
    writeNitrogenCsv(data);
    const r = manyfield(['import', '--workspace', join(dir, 'typo.manyfield'), '--file', data, '--map', m]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/unknown key "decimalcomma" in the mapping; the keys allowed at the top level are "columns", .*"sheet".*; did you mean "decimalComma"\?/);
  });

  it('a decimal comma in a file read with points says which option to set', () => {
    const { text } = nitrogenCsv({ sites: ['S1'], years: [2024] });
    const lines = text.trim().split('\n');
    lines[5] = lines[5].replace(/(\d+)\.(\d+)$/, '"$1,$2"');
    const file = join(dir, 'comma.csv');
    writeFileSync(file, `${lines.join('\n')}\n`);
    const r = manyfield(['import', '--workspace', join(dir, 'comma.manyfield'), '--file', file, '--map', map]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/row 6, column "yield", value "\d+,\d+": .*set "decimalComma": true in the mapping/);
  });

  it('a workbook whose first sheet is notes: one hint naming the data sheet, and the "sheet" option reads it', () => {
    const { text } = nitrogenCsv({ sites: ['S1'], years: [2024] });
    const rows = text.trim().split('\n').map((l) => l.split(',').map((c) => (c !== '' && !Number.isNaN(Number(c)) ? Number(c) : c)));
    const file = join(dir, 'workbook.xlsx');
    writeFileSync(file, buildXlsx([{ name: 'Notes', rows: [['Nitrogen network 2024'], ['collected by the field team']] }, { name: 'Data', rows }]));
    const r = manyfield(['import', '--workspace', join(dir, 'book.manyfield'), '--file', file, '--map', map]);
    expect(r.status).toBe(1);
    // The hint comes first, before the columns the notes sheet lacks.
    expect(r.stderr.split('\n')[0]).toMatch(/\[wrong-sheet\]$/);
    expect(r.stderr).toMatch(/not on sheet "Notes" \(the workbook's first sheet, read when the mapping names none\); the workbook also has "Data": choose the sheet with "sheet": "Data" in the mapping \[wrong-sheet\]/);
    const withSheet = writeJson(dir, 'sheet-map.json', nitrogenMapping({ sheet: 'Data' }));
    const ok = manyfield(['import', '--workspace', join(dir, 'book.manyfield'), '--file', file, '--map', withSheet]);
    expect(ok.stderr).toBe('');
    expect(ok.status).toBe(0);
  });

  it('NA, n/a, N/A, "." and "-" are missing values like an empty cell', () => {
    const words = ['NA', 'n/a', 'N/A', '.', '-', ''];
    const { text } = nitrogenCsv({ sites: ['S1'], years: [2024] });
    const lines = text.trim().split('\n');
    words.forEach((w, i) => (lines[2 + 3 * i] = lines[2 + 3 * i].replace(/[\d.]+$/, w)));
    const file = join(dir, 'missing.csv');
    writeFileSync(file, `${lines.join('\n')}\n`);
    const ws = join(dir, 'missing.manyfield');
    const r = manyfield(['import', '--workspace', ws, '--file', file, '--map', map]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = join(dir, 'missing-export.csv');
    expect(manyfield(['export', '--workspace', ws, '--trait', 'yield', '--out', out]).status).toBe(0);
    const exported = readFileSync(out, 'utf8').trim().split('\n').slice(1);
    expect(exported.filter((l) => l.endsWith(',')).length).toBe(words.length);
  });

  describe('the plausibility screen', () => {
    const slipFile = join(dir, 'slip.csv');
    let slipRow = 0;
    beforeAll(() => {
      const plots: PlotLine[] = writeNitrogenCsv(slipFile, { slip: { site: 'S3', year: 2023, plot: '206' } });
      slipRow = plots.find((p) => p.site === 'S3' && p.year === 2023 && p.plot === '206')!.row;
    });

    it('import keeps an implausible value and lists it with its row and column', () => {
      const r = manyfield(['import', '--workspace', join(dir, 'slip.manyfield'), '--file', slipFile, '--map', map]);
      expect(r.status).toBe(0);
      const warnings = r.stderr.trim().split('\n');
      expect(warnings).toHaveLength(1);
      expect(warnings[0]).toMatch(new RegExp(`^manyfield: warning: .*slip\\.csv, row ${slipRow}, column "yield", value "\\d+(\\.\\d+)?": yield \\d+(\\.\\d+)? t/ha lies \\d+(\\.\\d+)? robust standard deviations from the median .* of the 28 plots of trial "S3-2023" \\(about 10 times the median: a slipped decimal point or another unit\\?\\)`));
      expect(r.stdout).toMatch(/1 value to check/);
    });

    it('with --data the same warning opens the report\'s warnings', () => {
      const spec = writeJson(dir, 'slip-spec.json', { trait: 'yield', columns: nitrogenColumns(), control: 'CTL', contrasts: [], oneStage: null });
      const { report } = analyzeJson(['--data', slipFile, '--spec', spec]);
      expect(report.warnings[0]).toMatch(new RegExp(`row ${slipRow}, column "yield".*trial "S3-2023"`));
    });

    it('where the trait has bounds, the value is refused', () => {
      const bounded = writeJson(dir, 'bounded.json', nitrogenMapping({ trait: { name: 'yield', unit: 't/ha', lower: 0, upper: 25 } }));
      const r = manyfield(['import', '--workspace', join(dir, 'bounded.manyfield'), '--file', slipFile, '--map', bounded]);
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(new RegExp(`row ${slipRow}, column "yield".*must lie within 0 to 25 t/ha \\[out-of-bounds\\]`));
    });

    it('a clean network gives no warning', () => {
      const clean = join(dir, 'clean.csv');
      writeNitrogenCsv(clean, { seed: 21 });
      const r = manyfield(['import', '--workspace', join(dir, 'clean.manyfield'), '--file', clean, '--map', map]);
      expect(r.stderr).toBe('');
      expect(r.status).toBe(0);
    });
  });
});
