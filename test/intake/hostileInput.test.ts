// Hostile or damaged input found by the adversarial probe (hardening, issue 20): each case is
// refused with a problem naming the file, row, column or key — never read silently wrong,
// never a raw JavaScript error. Every case here failed before the hardening.
import { truncateSync, writeFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseMapping, readMappingFile, readPlotFile } from '../../src/intake/index.js';
import { MAX_PLOT_FILE_BYTES } from '../../src/intake/rowSource.js';
import type { ImportMapping } from '../../src/intake/types.js';
import { brief, HEADER, MAPPING, problemsOf, toCsv, validRows, writeTemp } from './helpers.js';

const COVARIATE_HEADER = [...HEADER, 'ph'];
const WITH_COVARIATE: ImportMapping = { ...MAPPING, columns: { ...MAPPING.columns, covariates: ['ph'] } };

/** validRows with a ph column, 6.1 everywhere. */
function rowsWithPh(): string[][] {
  return validRows().map((r) => [...r, '6.1']);
}

describe('text encoding: declared or detected, never replaced', () => {
  // "Müller" and "Mäller" in Latin-1: ü = 0xFC, ä = 0xE4; both are invalid as UTF-8.
  const latin1 = Buffer.from(
    toCsv([...validRows(['Müller'], ['2021']), ...validRows(['Mäller'], ['2021'])]),
    'latin1',
  );

  it('refuses bytes that are not UTF-8, naming the row and byte offset', async () => {
    const path = writeTemp('latin1.csv', latin1);
    const problems = await problemsOf(() => readPlotFile(path, MAPPING));
    expect(problems).toHaveLength(1);
    const offset = latin1.indexOf(0xfc);
    expect(brief(problems)).toEqual([['bad-encoding', 2, null, null]]);
    expect(problems[0].message).toContain(`byte offset ${offset}`);
    expect(problems[0].message).toMatch(/"encoding": "latin-1"/);
  });

  it('reads the file when the mapping names its encoding: the two sites stay two', async () => {
    const path = writeTemp('latin1.csv', latin1);
    const table = await readPlotFile(path, { ...MAPPING, encoding: 'latin-1' });
    expect([...new Set(table.trials.map((t) => t.site))].sort()).toEqual(['Mäller', 'Müller']);
    const cp1252 = Buffer.concat([latin1.subarray(0, latin1.length - 1), Buffer.from([0x0a])]);
    const t2 = await readPlotFile(writeTemp('cp1252.csv', cp1252), { ...MAPPING, encoding: 'windows-1252' });
    expect(t2.trials.map((t) => t.site)).toContain('Müller');
  });

  it('reads UTF-16 with or without a byte-order mark when named', async () => {
    const text = toCsv(validRows(['Zürich'], ['2021']));
    const le = Buffer.from(text, 'utf16le');
    const t = await readPlotFile(writeTemp('u16.csv', le), { ...MAPPING, encoding: 'utf-16' });
    expect(t.trials[0].site).toBe('Zürich');
    const bom = Buffer.concat([Buffer.from([0xff, 0xfe]), le]);
    expect((await readPlotFile(writeTemp('u16bom.csv', bom), MAPPING)).trials[0].site).toBe('Zürich');
  });
});

describe('a cut-off last line', () => {
  it('is an error, not a new treatment with a missing value', async () => {
    const full = toCsv(validRows());
    const cut = full.slice(0, full.trimEnd().lastIndexOf(',') - 4); // mid-way through the last row
    const path = writeTemp('cut.csv', cut);
    const problems = await problemsOf(() => readPlotFile(path, MAPPING));
    const last = validRows().length + 1;
    expect(problems.map((p) => [p.rule, p.row])).toContainEqual(['cut-off-row', last]);
    expect(problems.find((p) => p.rule === 'cut-off-row')!.message).toMatch(/the last row has \d+ cells but the header has 7/);
  });

  it('a last line complete apart from a missing final newline still reads', async () => {
    const full = toCsv(validRows());
    await expect(readPlotFile(writeTemp('no-eol.csv', full.trimEnd()), MAPPING)).resolves.toMatchObject({ rowsRead: validRows().length });
  });
});

describe('covariate cells that cannot be stored as written', () => {
  it.each([
    ['1e309', 'not-finite'],
    ['NaN', 'not-finite'],
    ['-Infinity', 'not-finite'],
    ['1,234', 'thousands-separator'],
    ['12,345.5', 'thousands-separator'],
  ])('%s is refused naming the cell (%s)', async (cell, rule) => {
    const rows = rowsWithPh();
    // The first row of the second trial (North 2022): one cell would have turned the whole column into text.
    const at = 2 + 10;
    rows[at - 2][7] = cell;
    const problems = await problemsOf(() => readPlotFile(writeTemp('cov.csv', toCsv(rows, COVARIATE_HEADER)), WITH_COVARIATE));
    expect(brief(problems)).toEqual([[rule, at, 'ph', cell]]);
    expect(problems[0].message).toMatch(/^trial covariate ph: /);
  });

  it('a numeric covariate column stays numeric', async () => {
    const table = await readPlotFile(writeTemp('cov-ok.csv', toCsv(rowsWithPh(), COVARIATE_HEADER)), WITH_COVARIATE);
    for (const values of Object.values(table.trialCovariates)) expect(values.ph).toBe(6.1);
  });
});

describe('prototype-named keys in a mapping', () => {
  it('a factor called "toString" with units for other factors reads cleanly', async () => {
    const header = ['site', 'year', 'block', 'trt', 'rate', 'toString', 'yield'];
    const mapping: ImportMapping = { ...MAPPING, columns: { ...MAPPING.columns, factors: { rate: 'rate', toString: 'toString' } }, factorUnits: { rate: 'kg/ha' } };
    const table = await readPlotFile(writeTemp('proto.csv', toCsv(validRows(), header)), mapping);
    expect(table.factors.map((f) => f.name)).toEqual(['rate', 'toString']);
    expect(table.factors[1]).toEqual({ name: 'toString', kind: 'categorical' });
  });

  it('"constructor" and "__proto__" as keys are data, never the object machinery', async () => {
    const header = ['site', 'year', 'block', 'trt', 'rate', 'constructor', 'yield'];
    const json = JSON.parse(
      JSON.stringify({ ...MAPPING, columns: { ...MAPPING.columns, factors: { rate: 'rate', constructor: 'constructor' } } }).replace('"factorUnits":{', '"factorUnits":{"__proto__":"kg/ha",'),
    );
    const mapping = parseMapping(json, 'm.json');
    const table = await readPlotFile(writeTemp('proto2.csv', toCsv(validRows(), header)), mapping);
    expect(table.factors.find((f) => f.name === 'constructor')).toEqual({ name: 'constructor', kind: 'categorical' });
  });
});

describe('JSON documents bounded in depth and length', () => {
  it('a mapping nested 20,000 deep is refused naming the rule, not with a stack overflow', async () => {
    const path = writeTemp('deep.json', `{"columns":${'['.repeat(20000)}${']'.repeat(20000)}}`);
    const problems = await problemsOf(() => readMappingFile(path));
    expect(brief(problems)).toEqual([['mapping-shape', 0, '(top level)', null]]);
    expect(problems[0].message).toMatch(/nested more than 32 levels/);
  });

  it('a mapping file of several megabytes is refused up front with the limit', async () => {
    const path = writeTemp('huge.json', JSON.stringify({ ...MAPPING, control: 'C'.repeat(20 * 1024 * 1024) }));
    const problems = await problemsOf(() => readMappingFile(path));
    expect(problems[0].rule).toBe('file-too-large');
    expect(problems[0].message.length).toBeLessThan(400);
  });

  it('a long text under a key is refused naming the key', async () => {
    const path = writeTemp('long.json', JSON.stringify({ ...MAPPING, control: 'C'.repeat(200_000) }));
    const problems = await problemsOf(() => readMappingFile(path));
    expect(brief(problems)).toEqual([['mapping-shape', 0, 'control', null]]);
    expect(problems[0].message.length).toBeLessThan(400);
  });
});

describe('oversized plot files', () => {
  it('are refused before reading, with the limit', async () => {
    const path = writeTemp('huge.csv', '');
    truncateSync(path, MAX_PLOT_FILE_BYTES + 1); // sparse: no disk space used
    const t0 = performance.now();
    const problems = await problemsOf(() => readPlotFile(path, MAPPING));
    expect(performance.now() - t0).toBeLessThan(1000); // refused from its size, not read (2-core machine)
    expect(brief(problems)).toEqual([['file-too-large', 0, null, null]]);
    expect(problems[0].message).toMatch(/at most 500 MB/);
    writeFileSync(path, ''); // release the sparse file at once
  });
});
