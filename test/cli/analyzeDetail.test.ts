// `analyze --json` gives the compact report by default and every trial's full analysis with
// `--detail plots`. Reference: the full report of the same command on the same file — the
// summary must carry exactly its numbers (trial contrasts, means, ANOVA rows, flags, the
// pooling tables column by column), nothing recomputed.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { rowsFromColumns, type Columns } from '../../src/engine/pooling/compactPooled.js';
import { expandAnalysisJson } from '../../src/cli/analysisJson.js';
import { exampleNetworkCsv, exampleSpec } from '../../bench/full/exampleNetwork.js';
import { manyfield, tempDir } from '../support/cli.js';

interface Json {
  detail: string;
  twoStage: { trials: Record<string, unknown>[]; pooled: (Record<string, unknown> & { weights: unknown; sensitivity: Record<string, unknown> })[] };
}

describe('analyze --json: summary by default, --detail plots in full', () => {
  const dir = tempDir();
  const data = join(dir, 'plots.csv');
  const spec = join(dir, 'spec.json');
  let summary: Json;
  let full: Json;

  beforeAll(() => {
    writeFileSync(data, exampleNetworkCsv(70, 3)); // 70 trials: the shared-sums route of the sensitivity pools
    writeFileSync(spec, JSON.stringify(exampleSpec({ twoStage: true, oneStage: false, lrt: false })));
    const a = manyfield(['analyze', '--data', data, '--spec', spec, '--json']);
    expect(a.stderr).toBe('');
    // The default document is written in columns (test/cli/analysisJson.test.ts); read back, it is the summary report.
    summary = expandAnalysisJson(JSON.parse(a.stdout)) as Json;
    const b = manyfield(['analyze', '--data', data, '--spec', spec, '--json', '--detail', 'plots']);
    expect(b.stderr).toBe('');
    full = JSON.parse(b.stdout) as Json;
  }, 300_000);

  it('labels the shapes; the summary has no per-plot diagnostics, the full report has one row per plot', () => {
    expect(summary.detail).toBe('summary');
    expect(full.detail).toBe('plots');
    const s = summary.twoStage.trials[0] as { diagnostics: Record<string, unknown>; n: number };
    expect(s.diagnostics.plots).toBeUndefined();
    const f = full.twoStage.trials[0] as { diagnostics: { plots: unknown[] }; model: { n: number } };
    expect(f.diagnostics.plots).toHaveLength(f.model.n);
    expect(s.n).toBe(f.model.n);
  });

  it("carries each trial's contrasts, means and ANOVA rows with the full report's numbers", () => {
    summary.twoStage.trials.forEach((s, i) => {
      const f = full.twoStage.trials[i] as { contrasts: Record<string, unknown>[]; means: Record<string, unknown>[]; anova: { rows: Record<string, unknown>[] }; flags: { code: string }[] };
      const t = s as { contrasts: Record<string, unknown>[]; means: Record<string, unknown>[]; anova: { rows: Record<string, unknown>[] }; flags: { code: string }[]; diagnostics: { influentialPlots: number } };
      t.contrasts.forEach((c, j) => {
        for (const k of ['estimate', 'se', 'df', 'p', 'lower', 'upper']) expect(c[k], `${s.trial} ${String(c.name)} ${k}`).toBe(f.contrasts[j][k]);
      });
      t.means.forEach((m, j) => {
        for (const k of ['treatment', 'estimate', 'se', 'n']) expect(m[k]).toBe(f.means[j][k]);
      });
      t.anova.rows.forEach((r, j) => {
        for (const k of ['term', 'df', 'f', 'p']) expect(r[k]).toBe(f.anova.rows[j][k]);
      });
      expect(t.flags.map((x) => x.code)).toEqual(f.flags.map((x) => x.code).filter((c) => c !== 'influential-plot'));
      expect(t.diagnostics.influentialPlots).toBe(f.flags.filter((x) => x.code === 'influential-plot').length);
    });
  });

  it('gives the pooling tables column by column, the same rows as the full report', () => {
    summary.twoStage.pooled.forEach((p, c) => {
      const f = full.twoStage.pooled[c];
      expect(rowsFromColumns(p.weights as Columns<object>)).toEqual(f.weights);
      for (const table of ['leaveOneOut', 'influence', 'cumulative']) expect(rowsFromColumns(p.sensitivity[table] as Columns<object>)).toEqual(f.sensitivity[table]);
      for (const k of ['estimate', 'se', 'lower', 'upper', 'tau2', 'I2', 'predictionLower', 'predictionUpper', 'k']) expect(p[k]).toBe(f[k]);
    });
  });

  it('refuses an unknown --detail with the usage exit code', () => {
    const r = manyfield(['analyze', '--data', data, '--spec', spec, '--json', '--detail', 'everything']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--detail is "summary" or "plots"/);
  });
});
