import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { readDataForAnalysis, readPlotFile } from '../../src/intake/index.js';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';
import { IntakeError, type ImportMapping } from '../../src/intake/types.js';
import { brief, HEADER, MAPPING, problemsOf, setCell, toCsv, TREATMENTS, validRows, writeTemp } from './helpers.js';

// Spreadsheet row r of the file from validRows() is validRows()[r - 2]; treatments cycle
// through TREATMENTS, so row r holds TREATMENTS[(r - 2) % 5].

describe('readPlotFile on a valid file', () => {
  const rows = validRows();
  const path = writeTemp('valid.csv', toCsv(rows));

  it('reads trials, treatments, factors, plots and values', async () => {
    const fractions: number[] = [];
    const t = await readPlotFile(path, MAPPING, { onProgress: (f) => fractions.push(f) });
    expect(t.rowsRead).toBe(40);
    expect(t.trials).toEqual([
      { key: 'North-2021', site: 'North', year: 2021, design: 'randomised-blocks' },
      { key: 'North-2022', site: 'North', year: 2022, design: 'randomised-blocks' },
      { key: 'South-2021', site: 'South', year: 2021, design: 'randomised-blocks' },
      { key: 'South-2022', site: 'South', year: 2022, design: 'randomised-blocks' },
    ]);
    expect(t.factors).toEqual([
      { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
      { name: 'timing', kind: 'categorical' },
    ]);
    // The control's blank rate is 0 (it received none of the input); other blanks are "not applicable".
    expect(t.treatments).toEqual(TREATMENTS.map(([code, rate, timing]) => ({ code, levels: { rate: rate === '' ? (code === 'CTL' ? 0 : null) : Number(rate), timing: timing === '' ? null : timing } })));
    expect(t.control).toBe('CTL');
    expect(t.traits).toEqual([{ name: 'yield', unit: 't/ha', kind: 'continuous', lower: null, upper: null }]);
    expect(t.plots).toHaveLength(40);
    expect(t.plots[6]).toEqual({ trialKey: 'North-2021', treatment: 'A1', block: '2', row: null, col: null, plotId: null, sourceRow: 8 });
    expect(t.observations.map((o) => o.value)).toEqual(rows.map((r) => Number(r[6])));
    expect(t.observations.every((o, i) => o.plot === i && o.trait === 'yield')).toBe(true);
    expect(fractions.at(-1)).toBe(1);
  });

  it('hashes the file exactly as sha256sum does', async () => {
    const t = await readPlotFile(path, MAPPING);
    const outside = execFileSync('sha256sum', [path], { encoding: 'utf8' }).split(' ')[0];
    expect(t.sha256).toBe(outside);
  });

  it('reads an empty response cell (or NA) as a missing plot, not an error', async () => {
    const r = validRows();
    setCell(r, 5, 'yield', '');
    setCell(r, 6, 'yield', 'NA');
    const t = await readPlotFile(writeTemp('missing.csv', toCsv(r)), MAPPING);
    expect(t.observations[3].value).toBeNull();
    expect(t.observations[4].value).toBeNull();
    expect(t.plots).toHaveLength(40);
  });

  it('keys trials by the trial column when given, and takes covariates per trial', async () => {
    const header = ['env', 'block', 'trt', 'y', 'ph', 'prev'];
    const data = [
      ['E1', '1', 'CTL', '4.1', '6.5', 'wheat'],
      ['E1', '1', 'A1', '4.9', '', ''],
      ['E1', '2', 'CTL', '4.3', '6.5', 'wheat'],
      ['E1', '2', 'A1', '5.2', '6.5', ''],
      ['E2', '1', 'CTL', '3.1', '5.9', 'maize'],
      ['E2', '1', 'A1', '3.7', '5.9', 'maize'],
      ['E2', '2', 'CTL', '3.0', '5.9', 'maize'],
      ['E2', '2', 'A1', '3.9', '5.9', 'maize'],
    ];
    const mapping: ImportMapping = { columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', covariates: ['ph', 'prev'] }, trait: { name: 'y', unit: 'as-is' } };
    const t = await readPlotFile(writeTemp('env.csv', toCsv(data, header)), mapping);
    expect(t.trials).toEqual([
      { key: 'E1', site: 'E1', year: 0, design: 'randomised-blocks' },
      { key: 'E2', site: 'E2', year: 0, design: 'randomised-blocks' },
    ]);
    expect(t.trialCovariates).toEqual({ E1: { ph: 6.5, prev: 'wheat' }, E2: { ph: 5.9, prev: 'maize' } });
  });
});

describe('trial column with a site column', () => {
  const header = ['env', 'site', 'block', 'trt', 'y'];
  const mapping: ImportMapping = { columns: { trial: 'env', site: 'site', block: 'block', treatment: 'trt', response: 'y' } };
  const data = (sites: string[]): string[][] => sites.map((s, i) => ['E1', s, String(1 + (i >> 1)), i % 2 === 0 ? 'CTL' : 'A1', String(i + 1)]);

  it('uses the trial key as site when the site cells are all empty', async () => {
    const t = await readPlotFile(writeTemp('nosite.csv', toCsv(data(['', '', '', '']), header)), mapping);
    expect(t.trials).toEqual([{ key: 'E1', site: 'E1', year: 0, design: 'randomised-blocks' }]);
  });

  it('reports a site cell left empty on one row of a trial', async () => {
    const p = await problemsOf(() => readPlotFile(writeTemp('somesite.csv', toCsv(data(['Hill', 'Hill', '', 'Hill']), header)), mapping));
    expect(brief(p)).toEqual([['trial-disagrees', 4, 'site', '']]);
  });
});

describe('design per trial', () => {
  const header = ['env', 'design', 'row', 'col', 'block', 'trt', 'y'];
  const base = (env: string, design: string, withBlock: boolean, withRowCol: boolean): string[][] =>
    [0, 1, 2, 3].map((i) => [env, design, withRowCol ? String(1 + (i >> 1)) : '', withRowCol ? String(1 + (i & 1)) : '', withBlock ? String(1 + (i >> 1)) : '', i % 2 === 0 ? 'CTL' : 'A1', String(3 + i)]);
  const mapping: ImportMapping = { columns: { trial: 'env', design: 'design', row: 'row', col: 'col', block: 'block', treatment: 'trt', response: 'y' } };

  it('takes the design column, else infers it from the layout columns', async () => {
    const data = [...base('T1', '', true, true), ...base('T2', '', false, true), ...base('T3', '', false, false), ...base('T4', 'latin-square', false, true)];
    const t = await readPlotFile(writeTemp('designs.csv', toCsv(data, header)), mapping);
    expect(t.trials.map((x) => [x.key, x.design])).toEqual([
      ['T1', 'randomised-blocks'],
      ['T2', 'row-column'],
      ['T3', 'completely-randomised'],
      ['T4', 'latin-square'],
    ]);
  });

  it('uses mapping.design when the file has no design column', async () => {
    const { design: _unused, ...columns } = mapping.columns;
    const t = await readPlotFile(writeTemp('d.csv', toCsv(base('T1', '', false, false), header)), { columns, design: 'completely-randomised' });
    expect(t.trials[0].design).toBe('completely-randomised');
  });

  it('reports a trial whose rows disagree on the design', async () => {
    const data = base('T1', 'rcbd', true, false);
    data[2][1] = 'crd';
    const p = await problemsOf(() => readPlotFile(writeTemp('dd.csv', toCsv(data, header)), mapping));
    expect(brief(p)).toEqual([['trial-disagrees', 4, 'design', 'crd']]);
  });
});

describe('every kind of bad input names its row and column', () => {
  const file = (name: string, rows: string[][], header: readonly string[] = HEADER): string => writeTemp(name, toCsv(rows, header));

  it('missing required column: reported on the header row', async () => {
    const p = await problemsOf(() => readPlotFile(file('nocol.csv', validRows()), { ...MAPPING, columns: { ...MAPPING.columns, block: 'blk' } }));
    expect(brief(p)).toEqual([['missing-column', 1, 'blk', null]]);
    expect(p[0].message).toContain('columns.block');
  });

  it('non-numeric value "12,4x" on row 17', async () => {
    const rows = validRows();
    setCell(rows, 17, 'yield', '12,4x');
    const path = file('bad17.csv', rows);
    const p = await problemsOf(() => readPlotFile(path, MAPPING));
    expect(brief(p)).toEqual([['not-a-number', 17, 'yield', '12,4x']]);
    expect(p[0].file).toBe(path);
  });

  it('a percentage above 100 is out of bounds', async () => {
    const rows = validRows();
    setCell(rows, 9, 'yield', '104');
    const p = await problemsOf(() => readPlotFile(file('pct.csv', rows), { ...MAPPING, trait: { name: 'cover', unit: '%' } }));
    expect(brief(p)).toEqual([['out-of-bounds', 9, 'yield', '104']]);
  });

  it('a value beyond the mapping bounds (given in the file unit) is out of bounds', async () => {
    const rows = validRows();
    setCell(rows, 5, 'yield', '12000');
    setCell(rows, 6, 'yield', '-1');
    const p = await problemsOf(() => readPlotFile(file('bounds.csv', rows), { ...MAPPING, trait: { name: 'yield', unit: 'kg/ha', lower: 0, upper: 10000 } }));
    expect(brief(p)).toEqual([
      ['out-of-bounds', 5, 'yield', '12000'],
      ['out-of-bounds', 6, 'yield', '-1'],
    ]);
  });

  it('an empty treatment code is an unknown treatment', async () => {
    const rows = validRows();
    setCell(rows, 6, 'trt', '');
    const p = await problemsOf(() => readPlotFile(file('notrt.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['unknown-treatment', 6, 'trt', '']]);
  });

  it('a code outside mapping.treatments, and a control that never appears, are unknown treatments', async () => {
    const rows = validRows();
    setCell(rows, 3, 'trt', 'A9');
    const p = await problemsOf(() => readPlotFile(file('codes.csv', rows), { ...MAPPING, control: 'CHK', treatments: ['CTL', 'A1', 'A2', 'B1', 'B2'] }));
    expect(brief(p)).toEqual([
      ['unknown-treatment', 3, 'trt', 'A9'],
      ['unknown-treatment', 0, 'trt', 'CHK'],
    ]);
  });

  it('a treatment whose factor levels disagree between rows', async () => {
    const rows = validRows();
    // Row 13 is an A1 plot of another trial than row 3 (A1 at rate 40): a site-specific amount,
    // kept for that trial. Row 18 is A1 in row 13's trial: there A1 has one amount (50) and timing.
    setCell(rows, 13, 'rate', '50');
    setCell(rows, 18, 'timing', 'late'); // A1 was first seen "early"
    setCell(rows, 23, 'rate', '40.0'); // the same number written differently is fine
    const p = await problemsOf(() => readPlotFile(file('levels.csv', rows), MAPPING));
    expect(brief(p)).toEqual([
      ['treatment-levels-disagree', 18, 'timing', 'late'],
      ['treatment-levels-disagree', 18, 'rate', '40'],
    ]);
    expect(p[0].message).toContain('row 3');
    expect(p[1].message).toMatch(/has rate "50" earlier in trial .*: within a trial a treatment has one level/);
  });

  it('duplicate plot: same trial, block and treatment', async () => {
    const rows = validRows();
    setCell(rows, 7, 'block', '1'); // row 7 is CTL of block 2; CTL block 1 is row 2
    const p = await problemsOf(() => readPlotFile(file('dup.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['duplicate-plot', 7, 'block', '1']]);
    expect(p[0].message).toContain('row 2');
  });

  it('duplicate plot: same trial, row and column', async () => {
    const header = ['env', 'row', 'col', 'trt', 'y'];
    const data = [
      ['T', '1', '1', 'CTL', '1'],
      ['T', '1', '2', 'A1', '2'],
      ['T', '2', '1', 'A1', '3'],
      ['T', '1', '2', 'CTL', '4'],
    ];
    const p = await problemsOf(() => readPlotFile(file('duprc.csv', data, header), { columns: { trial: 'env', row: 'row', col: 'col', treatment: 'trt', response: 'y' } }));
    expect(brief(p)).toEqual([['duplicate-plot', 5, 'row', '1']]);
  });

  it('duplicate plot: same plot id', async () => {
    const header = ['env', 'plot', 'trt', 'y'];
    const data = [
      ['T', '101', 'CTL', '1'],
      ['T', '102', 'A1', '2'],
      ['T', '103', 'CTL', '3'],
      ['T', '102', 'A1', '4'],
    ];
    const p = await problemsOf(() => readPlotFile(file('dupid.csv', data, header), { columns: { trial: 'env', plot: 'plot', treatment: 'trt', response: 'y' } }));
    expect(brief(p)).toEqual([['duplicate-plot', 5, 'plot', '102']]);
  });

  it('a trial with a single replicate', async () => {
    const rows = validRows().filter((r) => !(r[0] === 'South' && r[1] === '2022' && r[2] === '2'));
    const firstRow = rows.findIndex((r) => r[0] === 'South' && r[1] === '2022') + 2;
    expect(firstRow).toBe(32);
    const p = await problemsOf(() => readPlotFile(file('single.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['single-replicate', 32, 'trt', 'South-2022']]);
  });

  it('an unparseable year', async () => {
    const rows = validRows();
    setCell(rows, 22, 'year', '20x1');
    const p = await problemsOf(() => readPlotFile(file('year.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['bad-year', 22, 'year', '20x1']]);
  });

  it('an empty file, and a file with a header but no data rows', async () => {
    expect(brief(await problemsOf(() => readPlotFile(writeTemp('empty.csv', ''), MAPPING)))).toEqual([['empty-file', 0, null, null]]);
    expect(brief(await problemsOf(() => readPlotFile(writeTemp('header.csv', `${HEADER.join(',')}\n\n`), MAPPING)))).toEqual([['empty-file', 0, null, null]]);
  });

  it('a trial whose rows disagree on site or year', async () => {
    const header = ['env', 'site', 'year', 'block', 'trt', 'y'];
    const data = [
      ['E1', 'North', '2021', '1', 'CTL', '1'],
      ['E1', 'North', '2021', '1', 'A1', '2'],
      ['E1', 'Nord', '2021', '2', 'CTL', '3'],
      ['E1', 'North', '2022', '2', 'A1', '4'],
    ];
    const p = await problemsOf(() => readPlotFile(file('site.csv', data, header), { columns: { trial: 'env', site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'y' } }));
    expect(brief(p)).toEqual([
      ['trial-disagrees', 4, 'site', 'Nord'],
      ['trial-disagrees', 5, 'year', '2022'],
    ]);
  });

  it('a covariate that changes within a trial', async () => {
    const header = [...HEADER, 'ph'];
    const rows = validRows().map((r) => [...r, '6.1']);
    rows[4][7] = '6.4'; // row 6
    const p = await problemsOf(() => readPlotFile(file('cov.csv', rows, header), { ...MAPPING, columns: { ...MAPPING.columns, covariates: ['ph'] } }));
    expect(brief(p)).toEqual([['covariate-not-constant', 6, 'ph', '6.4']]);
  });

  it('lists every problem of the file together, in row order', async () => {
    const rows = validRows();
    setCell(rows, 3, 'yield', 'abc');
    setCell(rows, 10, 'year', '2O21');
    setCell(rows, 20, 'trt', '');
    // Row 25 is its treatment's first plot in its trial, so 99 reads as that trial's amount (a
    // site-specific amount); the trial's next plot of the treatment, row 30, then disagrees with it.
    setCell(rows, 25, 'rate', '99');
    const p = await problemsOf(() => readPlotFile(file('many.csv', rows), MAPPING));
    expect(brief(p)).toEqual([
      ['not-a-number', 3, 'yield', 'abc'],
      ['bad-year', 10, 'year', '2O21'],
      ['unknown-treatment', 20, 'trt', ''],
      ['treatment-levels-disagree', 30, 'rate', '40'],
    ]);
    expect(p[3].message).toMatch(/has rate "99" earlier in trial/);
  });

  it('stops at maxProblems and says the list is truncated', async () => {
    const rows = validRows().map((r) => [...r.slice(0, 6), 'x']);
    let error: unknown;
    await readPlotFile(file('trunc.csv', rows), MAPPING, { maxProblems: 5 }).catch((e: unknown) => (error = e));
    expect(error).toBeInstanceOf(IntakeError);
    const e = error as IntakeError;
    expect(e.problems.map((p) => p.row)).toEqual([2, 3, 4, 5, 6]);
    expect(e.truncated).toBe(true);
    expect(e.message).toContain('more problems not listed');
  });

  it('an unclosed quote names the row where it opened', async () => {
    const text = toCsv(validRows()).replace('North,2022,1,CTL', 'North,2022,1,"CTL');
    const p = await problemsOf(() => readPlotFile(writeTemp('quote.csv', text), MAPPING));
    // The rest of the file became one cell, so other problems follow; the quote is named.
    expect(brief(p.filter((x) => x.rule === 'unclosed-quote'))).toEqual([['unclosed-quote', 12, null, null]]);
  });

  it('shows only the start of a huge bad cell', async () => {
    const rows = validRows();
    setCell(rows, 4, 'yield', 'x'.repeat(100_000));
    const p = await problemsOf(() => readPlotFile(file('hugecell.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['not-a-number', 4, 'yield', `${'x'.repeat(200)}... (100000 characters)`]]);
  });

  it('a row with more cells than the header', async () => {
    const rows = validRows();
    rows[7].push('surplus');
    const p = await problemsOf(() => readPlotFile(file('extra.csv', rows), MAPPING));
    expect(brief(p)).toEqual([['extra-cells', 9, null, 'surplus']]);
  });
});

describe('layout and trait-kind rules', () => {
  const header = ['env', 'design', 'block', 'row', 'col', 'trt', 'y'];
  const mapping: ImportMapping = { columns: { trial: 'env', design: 'design', block: 'block', row: 'row', col: 'col', treatment: 'trt', response: 'y' } };
  const rcRows = (): string[][] => [
    ['T', 'row-column', '', '1', '1', 'CTL', '3'],
    ['T', 'row-column', '', '1', '2', 'A1', '4'],
    ['T', 'row-column', '', '2', '1', 'A1', '5'],
    ['T', 'row-column', '', '2', '2', 'CTL', '6'],
  ];

  it('an unknown design name', async () => {
    const data = rcRows();
    data[1][1] = 'split-plot';
    const p = await problemsOf(() => readPlotFile(writeTemp('ud.csv', toCsv(data, header)), mapping));
    expect(brief(p)).toEqual([['unknown-design', 3, 'design', 'split-plot']]);
  });

  it('a row-column trial with a plot lacking its column, and a position that is not a whole number', async () => {
    const data = rcRows();
    data[2][4] = '';
    data[3][3] = '2.5';
    const p = await problemsOf(() => readPlotFile(writeTemp('rc.csv', toCsv(data, header)), mapping));
    expect(brief(p)).toEqual([
      ['not-an-integer', 5, 'row', '2.5'],
      ['missing-row-column', 4, 'row', ''],
    ]);
  });

  it('a randomised-blocks trial with a plot lacking its block', async () => {
    const data = rcRows().map((r, i) => [r[0], 'rcbd', i === 2 ? '' : String(1 + (i >> 1)), '', '', r[5], r[6]]);
    const p = await problemsOf(() => readPlotFile(writeTemp('rb.csv', toCsv(data, header)), mapping));
    expect(brief(p)).toEqual([['missing-block', 4, 'block', '']]);
  });

  it('a count trait must hold whole numbers', async () => {
    const data = rcRows();
    data[0][6] = '3.5';
    const p = await problemsOf(() => readPlotFile(writeTemp('count.csv', toCsv(data, header)), { ...mapping, trait: { name: 'y', unit: 'as-is', kind: 'count' } }));
    expect(brief(p)).toEqual([['not-a-count', 2, 'y', '3.5']]);
  });
});

describe('one row per plot and trait', () => {
  const header = ['env', 'block', 'trt', 'trait', 'value'];
  const data: string[][] = [];
  for (const b of ['1', '2']) {
    for (const [code, y, p] of [['CTL', '4.1', '120'], ['A1', '4.8', '135']]) {
      data.push(['E1', b, code, 'yield', y]);
      data.push(['E1', b, code, 'protein', p]);
    }
  }
  const mapping: ImportMapping = {
    columns: { trial: 'env', block: 'block', treatment: 'trt', trait: 'trait', response: 'value' },
    traits: [
      { name: 'yield', unit: 't/ha' },
      { name: 'protein', unit: 'g/kg' },
    ],
  };

  it('joins the traits of a plot and converts g/kg to %', async () => {
    const t = await readPlotFile(writeTemp('long.csv', toCsv(data, header)), mapping);
    expect(t.plots).toHaveLength(4);
    expect(t.traits.map((x) => [x.name, x.unit, x.kind, x.lower, x.upper])).toEqual([
      ['yield', 't/ha', 'continuous', null, null],
      ['protein', '%', 'percent', 0, 100],
    ]);
    const protein = t.observations.filter((o) => o.trait === 'protein').map((o) => [o.plot, o.value]);
    // 120 g/kg = 12 %, exactly 120 * 0.1 in floating point.
    expect(protein).toEqual([
      [0, 120 * 0.1],
      [1, 135 * 0.1],
      [2, 120 * 0.1],
      [3, 135 * 0.1],
    ]);
  });

  it('reports a plot whose rows disagree on the treatment', async () => {
    const header2 = ['env', 'plot', 'trt', 'trait', 'value'];
    const rows2 = [
      ['E1', '1', 'CTL', 'yield', '4'],
      ['E1', '1', 'CTL', 'protein', '120'],
      ['E1', '2', 'A1', 'yield', '5'],
      ['E1', '2', 'CTL', 'protein', '130'],
      ['E1', '3', 'CTL', 'yield', '4'],
      ['E1', '4', 'A1', 'yield', '5'],
    ];
    const p = await problemsOf(() => readPlotFile(writeTemp('long-plot.csv', toCsv(rows2, header2)), { ...mapping, columns: { trial: 'env', plot: 'plot', treatment: 'trt', trait: 'trait', response: 'value' } }));
    expect(brief(p)).toEqual([['plot-disagrees', 5, 'trt', 'CTL']]);
  });

  it('asks for a plot identifier when traits cannot be tied to plots', async () => {
    const rows2 = data.map((r) => [r[0], r[2], r[3], r[4]]);
    const p = await problemsOf(() => readPlotFile(writeTemp('long-noid.csv', toCsv(rows2, ['env', 'trt', 'trait', 'value'])), { ...mapping, columns: { trial: 'env', treatment: 'trt', trait: 'trait', response: 'value' } }));
    expect(brief(p)).toEqual([['no-plot-identifier', 2, 'trait', 'yield']]);
  });

  it('reports the same trait twice for a plot, and an unlisted trait', async () => {
    const bad = data.map((r) => [...r]);
    bad[3][3] = 'yield'; // row 5: A1 block 1 yield again
    bad[5][3] = 'oil'; // row 7
    const p = await problemsOf(() => readPlotFile(writeTemp('long-bad.csv', toCsv(bad, header)), mapping));
    expect(brief(p)).toEqual([
      ['duplicate-plot', 5, 'block', '1'],
      ['unknown-trait', 7, 'trait', 'oil'],
    ]);
  });
});

describe('unit conversion on the way in', () => {
  it('bu/ac with the crop standard test weight becomes t/ha', async () => {
    const rows = validRows();
    const t = await readPlotFile(writeTemp('bu.csv', toCsv(rows)), { ...MAPPING, crop: 'wheat', trait: { name: 'yield', unit: 'bu/ac' } });
    // 60 lb/bu * 0.45359237 kg/lb / 0.40468564224 ha/ac / 1000 kg/t, per bu/ac (exact definitions).
    const perBuAc = (60 * 0.45359237) / 0.40468564224 / 1000;
    t.observations.forEach((o, i) => expect(o.value).toBeCloseTo(Number(rows[i][6]) * perBuAc, 12));
    expect(t.traits[0].unit).toBe('t/ha');
  });

  it('a numeric factor in lb/ac is stored in kg/ha', async () => {
    const t = await readPlotFile(writeTemp('lb.csv', toCsv(validRows())), { ...MAPPING, factorUnits: { rate: 'lb/ac' } });
    expect(t.factors[0]).toEqual({ name: 'rate', kind: 'numeric', unit: 'kg/ha' });
    expect(t.treatments[1].levels.rate).toBeCloseTo((40 * 0.45359237) / 0.40468564224, 12);
  });
});

describe('readDataForAnalysis', () => {
  it('builds the mapping from the spec columns and reads the file as-is', async () => {
    const header = ['env', 'block', 'trt', 'y', 'rate'];
    const data = ['1', '2'].flatMap((b) => [
      ['E1', b, 'CTL', '4.1', '0'],
      ['E1', b, 'A1', '4.9', '40'],
    ]);
    const spec = analysisSpecSchema.parse({ columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate' } }, control: 'CTL' });
    const { table } = await readDataForAnalysis(writeTemp('spec.csv', toCsv(data, header)), spec);
    expect(table.traits).toEqual([{ name: 'y', unit: 'as-is', kind: 'continuous', lower: null, upper: null }]);
    expect(table.control).toBe('CTL');
    expect(table.observations.map((o) => o.value)).toEqual([4.1, 4.9, 4.1, 4.9]);
    expect(table.treatments.map((t) => t.levels.rate)).toEqual([0, 40]);
  });

  it('refuses a spec without columns', async () => {
    const spec = analysisSpecSchema.parse({});
    expect(brief(await problemsOf(() => readDataForAnalysis('x.csv', spec)))).toEqual([['mapping-incomplete', 0, 'columns', null]]);
  });
});

describe('a mapping built in code', () => {
  it('is checked like a mapping file, naming the key', async () => {
    const bad = { columns: { trial: 'env', treatment: 'trt', response: 'y', extra: 'z' } } as unknown as ImportMapping;
    expect(brief(await problemsOf(() => readPlotFile(writeTemp('m.csv', 'env,trt,y\n'), bad)))).toEqual([['mapping-unknown-key', 0, 'columns.extra', 'z']]);
  });
});
