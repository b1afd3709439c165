// Forest rows from trial summaries: a trial without the contrast (not estimable) has no row,
// weights are matched by trial, sorting is stable and grouping keeps each group's order.
// References: hand-made rows (the expected orders are written out).
import { describe, expect, it } from 'vitest';
import { arrangeForest, forestRows, leftOutEntries, sortForest } from '../../../renderer/shape/forest.js';
import { numberChanges, specChanges } from '../../../renderer/shape/compare.js';

const c = (estimate: number) => ({ name: 'tvc', estimable: true, estimate, se: 0.1, df: 18, lower: estimate - 0.2, upper: estimate + 0.2 });
const trials = [
  { trial: 'S2-2020', site: 'S2', year: 2020, contrasts: [c(0.5)] },
  { trial: 'S1-2021', site: 'S1', year: 2021, contrasts: [c(0.2)] },
  { trial: 'S1-2020', site: 'S1', year: 2020, contrasts: [{ name: 'tvc', estimable: false, reason: 'control missing' }] },
  { trial: 'S3-2020', site: 'S3', year: 2020, contrasts: [c(0.9)] },
];

describe('forest rows', () => {
  const rows = forestRows(trials, 'tvc', { trial: ['S3-2020', 'S2-2020', 'S1-2021'], share: [0.5, 0.3, 0.2] });

  it('has one row per trial with the contrast, weights by trial', () => {
    expect(rows.map((r) => r.trial)).toEqual(['S2-2020', 'S1-2021', 'S3-2020']);
    expect(rows.map((r) => r.weightShare)).toEqual([0.3, 0.2, 0.5]);
  });

  it('sorts by estimate, site, year and weight', () => {
    expect(sortForest(rows, 'estimate').map((r) => r.trial)).toEqual(['S1-2021', 'S2-2020', 'S3-2020']);
    expect(sortForest(rows, 'site').map((r) => r.trial)).toEqual(['S1-2021', 'S2-2020', 'S3-2020']);
    expect(sortForest(rows, 'year').map((r) => r.trial)).toEqual(['S2-2020', 'S3-2020', 'S1-2021']);
    expect(sortForest(rows, 'weight').map((r) => r.trial)).toEqual(['S3-2020', 'S2-2020', 'S1-2021']);
  });

  it('groups by year with groups in order', () => {
    const g = arrangeForest(rows, 'estimate', 'year');
    expect(g.map((x) => [x.label, x.rows.map((r) => r.trial)])).toEqual([
      ['Year 2020', ['S2-2020', 'S3-2020']],
      ['Year 2021', ['S1-2021']],
    ]);
  });

  it('splits left-out lines into trial and reason', () => {
    expect(leftOutEntries(['S1-2020: control missing', 'no trial named'])).toEqual([
      { trial: 'S1-2020', reason: 'control missing' },
      { trial: '', reason: 'no trial named' },
    ]);
  });
});

describe('comparing two analyses', () => {
  it('lists the spec settings that differ by path, a section switched off as one line', () => {
    expect(specChanges({ twoStage: { tau2: 'reml' }, threshold: 0.3, moderators: ['a'], oneStage: { df: 'residual' } }, { twoStage: { tau2: 'dl' }, threshold: 0.3, moderators: [], oneStage: null })).toEqual([
      { key: 'moderators', left: '["a"]', right: '[]' },
      { key: 'oneStage', left: '{"df":"residual"}', right: 'off' },
      { key: 'twoStage.tau2', left: '"reml"', right: '"dl"' },
    ]);
    expect(specChanges({ contrasts: [{ name: 'a', divisor: 1 }] }, { contrasts: [{ name: 'a', divisor: 6 }] })).toEqual([{ key: 'contrasts[0].divisor', left: '1', right: '6' }]);
  });

  it('gives each pooled number with its change', () => {
    const p = { name: 'tvc', estimate: 1, lower: 0.5, upper: 1.5, tau2: 0.1, I2: 0.4, k: 10, predictionLower: 0, predictionUpper: 2 };
    const rows = numberChanges([p], [{ ...p, estimate: 1.25 }], 100, null);
    expect(rows.find((r) => r.what === 'tvc: pooled estimate')).toEqual({ what: 'tvc: pooled estimate', left: 1, right: 1.25, change: 0.25 });
    expect(rows.at(-1)).toEqual({ what: 'economic optimum rate', left: 100, right: null, change: null });
  });
});
