// Finding 1 of the new-user trial: the field's own plot labels, end to end. A decimal slip
// (81.0 for 8.10 t/ha) on the user's plot 304 is flagged as "Plot 304", excluded by that label,
// and the same spec gives the same answer on a second, freshly built workspace (whose internal
// plot ids differ) and with --data. Without a plot column, "plot" is refused (it never silently
// means the file row); "row" names a file row explicitly.
// Per-plot lists (flags, exclusions, missing plots) are in the full trial form: every run here asks for --detail plots.
import { describe, expect, it, beforeAll } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { nitrogenColumns, nitrogenMapping, writeNitrogenCsv, type PlotLine } from '../support/nitrogenNetwork.js';
import { analyzeJson, pooledOf, writeJson } from './support.js';

const SLIP = { site: 'S2', year: 2024, plot: '304' };
const EMPTY = [{ site: 'S1', year: 2023, plot: '102' }, { site: 'S3', year: 2024, plot: '205' }];
const CONTRASTS = [
  { name: 'treated_vs_control', kind: 'treated-vs-control' },
  { name: 'rate_linear', trend: 'rate', degree: 1 },
];
const BASE = { trait: 'yield', control: 'CTL', contrasts: CONTRASTS, oneStage: null, twoStage: { tau2: 'reml', interval: 'hksj' } };
const EXCLUDE = [{ trial: 'S2-2024', plot: '304', reason: 'decimal slip: 81.0 written for 8.10' }];

describe('plot labels from import to exclusion (workspace and --data)', () => {
  const dir = tempDir();
  const data = join(dir, 'network.csv');
  const other = join(dir, 'other-site.csv');
  const ws1 = join(dir, 'first.manyfield');
  const ws2 = join(dir, 'second.manyfield');
  const map = writeJson(dir, 'map.json', nitrogenMapping());
  let plots: PlotLine[] = [];

  beforeAll(() => {
    plots = writeNitrogenCsv(data, { slip: SLIP, empty: EMPTY });
    writeNitrogenCsv(other, { sites: ['S9'], seed: 99 });
    expect(manyfield(['import', '--workspace', ws1, '--file', data, '--map', map]).status).toBe(0);
    // The second workspace holds another file first (another trait, so it is not in the yield
    // analysis), so every plot of the network gets other internal ids there.
    const proteinMap = writeJson(dir, 'protein-map.json', nitrogenMapping({ trait: { name: 'protein', unit: '%' } }));
    expect(manyfield(['import', '--workspace', ws2, '--file', other, '--map', proteinMap]).status).toBe(0);
    expect(manyfield(['import', '--workspace', ws2, '--file', data, '--map', map]).status).toBe(0);
  });

  it('flags name the user\'s plot label, not an internal id', () => {
    const { report } = analyzeJson(['--detail', 'plots', '--workspace', ws1, '--spec', writeJson(dir, 'plain.json', BASE), '--no-save']);
    const trial = report.twoStage.trials.find((t) => t.trial === 'S2-2024')!;
    const outlier = trial.flags.find((f) => f.code === 'outlier-residual');
    expect(outlier?.label).toBe('304');
    expect(outlier?.message).toMatch(/^Plot 304 \(/);
    // The internal id travels beside the label (for the screens' actions) but is not what the user reads.
    expect(typeof outlier?.plotId).toBe('number');
    expect(outlier?.message).not.toContain(`Plot ${String(outlier?.plotId)} `);
    const missing = report.twoStage.trials.find((t) => t.trial === 'S1-2023')!.missing.map((m) => m.label);
    expect(missing).toEqual(['102']);
  });

  it('an exclusion by the user\'s label works, and the same spec gives the same answer on a second workspace and with --data', () => {
    const spec = writeJson(dir, 'exclude.json', { ...BASE, exclude: EXCLUDE });
    const a = analyzeJson(['--detail', 'plots', '--workspace', ws1, '--spec', spec]).report;
    const b = analyzeJson(['--detail', 'plots', '--workspace', ws2, '--spec', spec]).report;
    for (const r of [a, b]) {
      const trial = r.twoStage.trials.find((t) => t.trial === 'S2-2024')!;
      expect(trial.excluded.map((e) => [e.label, e.reason])).toEqual([['304', EXCLUDE[0].reason]]);
      expect(r.warnings.some((w) => /trial S2-2024, plot 304 \(treatment \w+, file row \d+\) excluded by the user/.test(w))).toBe(true);
    }
    const fromFile = analyzeJson(['--detail', 'plots', '--data', data, '--spec', writeJson(dir, 'exclude-data.json', { ...BASE, columns: nitrogenColumns(), exclude: EXCLUDE })]).report;
    // Same plots, same exclusion, same engine: the pooled numbers agree to rounding (1e-9 relative).
    for (const name of ['treated_vs_control', 'rate_linear']) {
      const ref = pooledOf(a, name);
      for (const r of [b, fromFile]) {
        expect(pooledOf(r, name).estimate).toBeCloseTo(ref.estimate, 9);
        expect(pooledOf(r, name).se).toBeCloseTo(ref.se, 9);
      }
    }
    // And the exclusion matters: without it the estimate moves.
    const plain = analyzeJson(['--detail', 'plots', '--workspace', ws1, '--spec', writeJson(dir, 'plain2.json', BASE), '--no-save']).report;
    expect(Math.abs(pooledOf(plain, 'treated_vs_control').estimate - pooledOf(a, 'treated_vs_control').estimate)).toBeGreaterThan(1e-3);
  });

  it('a label that does not exist is refused with the labels that do', () => {
    const spec = writeJson(dir, 'bad-label.json', { ...BASE, exclude: [{ trial: 'S2-2024', plot: '3004', reason: 'typo' }] });
    const r = manyfield(['analyze', '--workspace', ws1, '--spec', spec]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/spec\.exclude\[0\]\.plot: trial "S2-2024" has no plot labelled "3004"/);
    expect(r.stderr).toMatch(/did you mean "304"\?/);
    const t = writeJson(dir, 'bad-trial.json', { ...BASE, exclude: [{ trial: 'S2 2024', plot: '304', reason: 'typo' }] });
    expect(manyfield(['analyze', '--workspace', ws1, '--spec', t]).stderr).toMatch(/no trial "S2 2024".*did you mean "S2-2024"/s);
  });

  it('exports carry the plot labels', () => {
    const out = join(dir, 'yield.csv');
    expect(manyfield(['export', '--workspace', ws1, '--trait', 'yield', '--out', out]).status).toBe(0);
    const lines = readFileSync(out, 'utf8').trim().split('\n');
    const header = lines[0].split(',');
    const at = header.indexOf('plot');
    expect(at).toBeGreaterThan(0);
    const labels = new Set(lines.slice(1).map((l) => l.split(',')[at]));
    expect(labels.has('304')).toBe(true);
    expect(labels.size).toBe(28); // 4 blocks x 7 plots, the same labels at every site
  });

  describe('--data without a plot column', () => {
    const bare = join(dir, 'no-plot-column.csv');
    let barePlots: PlotLine[] = [];
    beforeAll(() => {
      barePlots = writeNitrogenCsv(bare, { slip: SLIP, empty: EMPTY, plotColumn: false });
    });

    it('"plot" is refused instead of silently meaning the file row', () => {
      const slipRow = plots.find((p) => p.site === 'S2' && p.year === 2024 && p.plot === '304')!.row;
      const spec = writeJson(dir, 'bare-plot.json', { ...BASE, columns: nitrogenColumns(false), exclude: [{ trial: 'S2-2024', plot: slipRow, reason: 'slip' }] });
      const r = manyfield(['analyze', '--data', bare, '--spec', spec, '--json']);
      expect(r.status).toBe(1);
      expect(r.stdout).toBe('');
      expect(r.stderr).toMatch(/have no labels \(the data had no plot column\)/);
      expect(r.stderr).toMatch(/"row"/);
    });

    it('"row" names a file row explicitly; excluding an already-empty plot says it changes nothing', () => {
      const slipRow = barePlots.find((p) => p.site === 'S2' && p.year === 2024 && p.plot === '304')!.row;
      const emptyRow = barePlots.find((p) => p.site === 'S1' && p.year === 2023 && p.plot === '102')!.row;
      const spec = writeJson(dir, 'bare-row.json', {
        ...BASE,
        columns: nitrogenColumns(false),
        exclude: [
          { trial: 'S2-2024', row: slipRow, reason: 'slip' },
          { trial: 'S1-2023', row: emptyRow, reason: 'lodged' },
        ],
      });
      const { report } = analyzeJson(['--detail', 'plots', '--data', bare, '--spec', spec]);
      const trial = report.twoStage.trials.find((t) => t.trial === 'S2-2024')!;
      expect(trial.excluded).toHaveLength(1);
      expect(trial.excluded[0].plotId).toBe(slipRow);
      expect(report.warnings.some((w) => w.includes(`the plot on file row ${emptyRow}`) && w.includes('changes nothing'))).toBe(true);
      // The slip plot is gone: the same answer as excluding it by label in the labelled file.
      const labelled = analyzeJson(['--detail', 'plots', '--data', data, '--spec', writeJson(dir, 'lab.json', { ...BASE, columns: nitrogenColumns(), exclude: [EXCLUDE[0], { trial: 'S1-2023', plot: '102', reason: 'lodged' }] })]).report;
      expect(pooledOf(report, 'rate_linear').estimate).toBeCloseTo(pooledOf(labelled, 'rate_linear').estimate, 9);
    });
  });
});
