// trials.overview and trial.detail on the demo workspace. The numbers are checked against
// textbook formulas for a complete randomised-block trial computed here from the raw plot
// values (common practice, no single source): grand mean, residual mean square of the additive
// two-way model, fitted = block mean + treatment mean - grand mean, leverage p/n for every plot,
// the deleted-residual and Cook's distance identities of a linear model.
import { describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { api } from '../../../src/api/handlers.js';
import type { TrialOverviewEntry } from '../../../src/api/trials/overview.js';
import { data, demoCopy, demoWorkspace } from '../support/demoWorkspace.js';

const REL = 1e-9;

interface PlotValue {
  id: number;
  label: string | null;
  block: string;
  treatment: string;
  value: number;
}

function plotValues(path: string, trialId: number): PlotValue[] {
  const db = new Database(path, { readonly: true });
  try {
    return db
      .prepare(
        `SELECT p.id, p.label, p.block, tm.code AS treatment, o.value FROM plot p JOIN treatment tm ON tm.id = p.treatment_id
         JOIN observation o ON o.plot_id = p.id JOIN trait tr ON tr.id = o.trait_id AND tr.name = 'yield'
         WHERE p.trial_id = ? AND p.excluded = 0 AND o.value IS NOT NULL ORDER BY p.id`,
      )
      .all(trialId) as PlotValue[];
  } finally {
    db.close();
  }
}

const mean = (xs: readonly number[]): number => xs.reduce((a, b) => a + b, 0) / xs.length;
const groupMeans = (plots: readonly PlotValue[], key: 'block' | 'treatment'): Map<string, number> => {
  const groups = new Map<string, number[]>();
  for (const p of plots) groups.set(p[key], [...(groups.get(p[key]) ?? []), p.value]);
  return new Map([...groups].map(([k, v]) => [k, mean(v)]));
};

function completeBlockTrial(rows: readonly TrialOverviewEntry[]): TrialOverviewEntry {
  const t = rows.find((r) => r.design === 'randomised-blocks' && r.missing === 0 && r.treatments === 7 && r.plots === 28);
  if (!t) throw new Error('the demo has no complete randomised-block trial');
  return t;
}

describe('trials.overview', () => {
  it('lists all 42 demo trials with mean and CV matching the textbook two-way ANOVA of a complete block trial', async () => {
    const path = await demoWorkspace();
    const rows = data(await api['trials.overview']({ workspace: path, trait: 'yield' }));
    expect(rows).toHaveLength(42);
    for (const r of rows) {
      const plots = plotValues(path, r.id);
      expect(r.mean).toBeCloseTo(mean(plots.map((p) => p.value)), 9);
    }
    let checked = 0;
    for (const r of rows.filter((x) => x.design === 'randomised-blocks' && x.missing === 0 && x.plots === 28)) {
      const plots = plotValues(path, r.id);
      const grand = mean(plots.map((p) => p.value));
      const blocks = groupMeans(plots, 'block');
      const treatments = groupMeans(plots, 'treatment');
      const ssE = plots.reduce((s, p) => s + (p.value - blocks.get(p.block)! - treatments.get(p.treatment)! + grand) ** 2, 0);
      const dfE = (blocks.size - 1) * (treatments.size - 1);
      const cv = (100 * Math.sqrt(ssE / dfE)) / grand;
      expect(Math.abs(r.cv! - cv)).toBeLessThan(REL * cv);
      checked++;
    }
    expect(checked).toBeGreaterThan(5);
  });

  it('carries the data-quality flags where the demo planted problems', async () => {
    const rows = data(await api['trials.overview']({ workspace: await demoWorkspace(), trait: 'yield' }));
    const byLabel = new Map(rows.map((r) => [r.label, r]));
    expect(byLabel.get('JES-2024')!.flags.map((f) => f.code)).toContain('outlier-residual');
    expect(byLabel.get('DUN-2025')!.flags.map((f) => f.code)).toContain('treatment-absent');
    expect(byLabel.get('ELS-2023')!.missing).toBe(1);
    expect(byLabel.get('ELS-2023')!.flags.map((f) => f.code)).toContain('missing-plots');
    for (const r of rows) for (const f of r.flags) expect(f.message.length).toBeGreaterThan(10);
  });

  it('counts an exclusion and names an unknown trait', async () => {
    const path = await demoCopy();
    const before = data(await api['trials.overview']({ workspace: path, trait: 'yield' }));
    const t = completeBlockTrial(before);
    const plot = plotValues(path, t.id)[0];
    data(await api['plots.exclude']({ workspace: path, plot: plot.id, reason: 'hail damage' }));
    const after = data(await api['trials.overview']({ workspace: path, trait: 'yield' })).find((r) => r.id === t.id)!;
    expect(after.excluded).toBe(1);
    expect(after.flags.map((f) => f.code)).toContain('excluded-plots');
    const r = await api['trials.overview']({ workspace: path, trait: 'oil' });
    expect(r).toMatchObject({ ok: false, error: { code: 'not-found' } });
    if (!r.ok) expect(r.error.message).toContain('"yield"');
  });
});

describe('trial.detail', () => {
  it('gives every plot of a complete block trial its fitted value, residual, leverage, studentised residual, Cook\'s distance and normal score', async () => {
    const path = await demoWorkspace();
    const t = completeBlockTrial(data(await api['trials.overview']({ workspace: path, trait: 'yield' })));
    const d = data(await api['trial.detail']({ workspace: path, trial: t.id, trait: 'yield' }));
    expect(d.trial).toMatchObject({ id: t.id, label: t.label, site: t.site, year: t.year, design: 'randomised-blocks' });
    expect(d.unit).toBe('t/ha');
    expect(d.control).toBe('CTL');
    expect(d.treatments).toHaveLength(7);
    expect(d.analysisError).toBeNull();
    expect(d.plots).toHaveLength(28);

    const plots = plotValues(path, t.id);
    const grand = mean(plots.map((p) => p.value));
    const blocks = groupMeans(plots, 'block');
    const treatments = groupMeans(plots, 'treatment');
    const n = plots.length;
    const p = blocks.size + treatments.size - 1;
    const dfE = n - p;
    const s2 = plots.reduce((s, q) => s + (q.value - blocks.get(q.block)! - treatments.get(q.treatment)! + grand) ** 2, 0) / dfE;
    for (const q of plots) {
      const row = d.plots.find((x) => x.id === q.id)!;
      const fitted = blocks.get(q.block)! + treatments.get(q.treatment)! - grand;
      const h = p / n;
      const e = q.value - fitted;
      const r = e / Math.sqrt(s2 * (1 - h));
      // The field's own plot label as stored (the demo numbers its plots 101, 102, ...).
      expect(row.label).toBe(q.label ?? String(q.id));
      expect(row.value).toBeCloseTo(q.value, 12);
      expect(row.fitted!).toBeCloseTo(fitted, 9);
      expect(row.residual!).toBeCloseTo(e, 9);
      expect(row.leverage!).toBeCloseTo(h, 9);
      expect(row.studentised!).toBeCloseTo(r * Math.sqrt((dfE - 1) / (dfE - r * r)), 8);
      expect(row.cooks!).toBeCloseTo((r * r * h) / (p * (1 - h)), 9);
      expect(row.excluded).toBe(false);
      expect(row.reason).toBeNull();
    }
    // Normal scores rank the plots as their residuals do.
    const byResidual = [...d.plots].sort((a, b) => a.residual! - b.residual!).map((x) => x.id);
    const byScore = [...d.plots].sort((a, b) => a.normalScore! - b.normalScore!).map((x) => x.id);
    expect(byScore).toEqual(byResidual);

    const analysis = d.analysis!;
    expect(analysis.anova.rows.map((r) => r.term)).toContain('treatment');
    expect(analysis.means).toHaveLength(7);
    const names = analysis.contrasts.map((c) => c.name);
    expect(names).toEqual(['treated_vs_control', 'rate_linear']);
    const tvc = analysis.contrasts[0];
    const treatedMean = mean([...treatments].filter(([k]) => k !== 'CTL').map(([, v]) => v));
    expect(tvc.estimable && tvc.estimate).toBeCloseTo(treatedMean - treatments.get('CTL')!, 9);
    expect(analysis.diagnostics.brownForsythe.available).toBe(true);
    expect(analysis.diagnostics.spatial).toHaveProperty('flagged');
  });

  it('shows excluded and missing plots without diagnostics, and still opens a trial whose plots are all excluded', async () => {
    const path = await demoCopy();
    const rows = data(await api['trials.overview']({ workspace: path, trait: 'yield' }));
    const withMissing = rows.find((r) => r.label === 'ELS-2023')!;
    const d = data(await api['trial.detail']({ workspace: path, trial: withMissing.id, trait: 'yield' }));
    const missing = d.plots.filter((x) => x.value === null);
    expect(missing).toHaveLength(1);
    expect(missing[0]).toMatchObject({ fitted: null, residual: null, studentised: null, leverage: null, cooks: null, normalScore: null });

    const t = completeBlockTrial(rows);
    for (const q of data(await api['trial.detail']({ workspace: path, trial: t.id, trait: 'yield' })).plots)
      data(await api['plots.exclude']({ workspace: path, plot: q.id, reason: 'flooded' }));
    const empty = data(await api['trial.detail']({ workspace: path, trial: t.id, trait: 'yield' }));
    expect(empty.analysis).toBeNull();
    expect(empty.analysisError).toMatch(/no plot has a value/);
    expect(empty.plots.every((x) => x.excluded && x.reason === 'flooded')).toBe(true);
  });

  it('answers an unknown trial with not-found', async () => {
    expect(await api['trial.detail']({ workspace: await demoWorkspace(), trial: 99999, trait: 'yield' })).toMatchObject({ ok: false, error: { code: 'not-found' } });
  });
});
