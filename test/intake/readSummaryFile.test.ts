import { describe, expect, it } from 'vitest';
import { readSummaryFile } from '../../src/intake/index.js';
import { brief, problemsOf, toCsv, writeTemp } from './helpers.js';

const HEAD = ['env', 'est', 'se', 'df', 'ph', 'soil'];
const COLUMNS = { trial: 'env', estimate: 'est', se: 'se', df: 'df', covariates: ['ph', 'soil'] };

describe('readSummaryFile', () => {
  it('reads estimates, standard errors, df and covariates', async () => {
    const rows = [
      ['E1', '0.52', '0.21', '12', '6.1', 'clay'],
      ['E2', '-0.10', '0.30', '', '5.8', ''],
      ['E3', '0.91', '0.18', '18', '', 'loam'],
    ];
    const r = await readSummaryFile(writeTemp('sum.csv', toCsv(rows, HEAD)), COLUMNS);
    expect(r).toEqual([
      { trial: 'E1', estimate: 0.52, se: 0.21, df: 12, covariates: { ph: 6.1, soil: 'clay' } },
      { trial: 'E2', estimate: -0.1, se: 0.3, df: null, covariates: { ph: 5.8, soil: null } },
      { trial: 'E3', estimate: 0.91, se: 0.18, df: 18, covariates: { ph: null, soil: 'loam' } },
    ]);
  });

  it('reports every bad row with its column: se not positive, non-numbers, duplicates', async () => {
    const rows = [
      ['E1', '0.52', '0', '12', '6.1', 'clay'],
      ['E2', 'n/a', '0.30', '', '5.8', ''],
      ['E1', '0.91', '-0.2', 'x', '', 'loam'],
      ['E4', '', '0.1', '', '', ''],
    ];
    const p = await problemsOf(() => readSummaryFile(writeTemp('sumbad.csv', toCsv(rows, HEAD)), COLUMNS));
    expect(brief(p)).toEqual([
      ['se-not-positive', 2, 'se', '0'],
      ['missing-value', 3, 'est', 'n/a'], // n/a is a missing-value word, and a summary row needs its estimate
      ['duplicate-trial', 4, 'env', 'E1'],
      ['se-not-positive', 4, 'se', '-0.2'],
      ['not-a-number', 4, 'df', 'x'],
      ['missing-value', 5, 'est', ''],
    ]);
  });

  it('names a missing column on the header row, and an empty file', async () => {
    const p = await problemsOf(() => readSummaryFile(writeTemp('sumcol.csv', toCsv([['E1', '1', '1']], ['env', 'est', 'stderr'])), { trial: 'env', estimate: 'est', se: 'se' }));
    expect(brief(p)).toEqual([['missing-column', 1, 'se', null]]);
    expect(brief(await problemsOf(() => readSummaryFile(writeTemp('sumempty.csv', 'env,est,se\n'), { trial: 'env', estimate: 'est', se: 'se' })))).toEqual([['empty-file', 0, null, null]]);
  });
});
