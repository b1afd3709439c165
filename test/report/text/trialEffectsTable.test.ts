// With hundreds of trials the per-trial table is summarised: the most extreme effects, the
// highest CVs and the seriously flagged trials are listed, the rest counted. The demo network
// (invented data) copied eight times under new trial names gives 336 trials.
import { describe, expect, it } from 'vitest';
import { generateDemoNetwork } from '../../../src/demo/generate.js';
import { networkFromTable } from '../../../src/api/analysis/networkFromTable.js';
import { runAnalysis } from '../../../src/api/analysis/runAnalysis.js';
import type { AnyAnalysisReport, TrialStageEntry } from '../../../src/api/analysis/report.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { EXTREMES_EACH_END, FULL_TABLE_MAX_TRIALS, trialEffectsLines } from '../../../src/report/text/trialEffectsTable.js';

describe('per-trial effects table', () => {
  it('summarises 336 trials: the extremes and the flagged ones listed, the count stated', () => {
    const demo = networkFromTable(generateDemoNetwork().table, 'yield');
    const trials = Array.from({ length: 8 }, (_, copy) => demo.trials.map((t) => ({ ...t, trial: `${t.trial}-c${copy}` }))).flat();
    const spec = analysisSpecSchema.parse({ trait: 'yield', control: 'CTL', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }], oneStage: null });
    const report = { ...runAnalysis({ ...demo, trials }, spec), provenance: { source: 't', dataFingerprint: '0', appVersion: 't', createdAt: '' } } as AnyAnalysisReport;
    const text = trialEffectsLines(report).join('\n');
    expect(trials.length).toBeGreaterThan(FULL_TABLE_MAX_TRIALS);
    const rows = text.split('\n').filter((l) => /-c\d /.test(l));
    expect(rows.length).toBeLessThan(60);
    expect(text).toContain(`${rows.length} of ${trials.length} trials shown`);
    const entries = report.twoStage.trials as TrialStageEntry[];
    const effect = (t: TrialStageEntry) => {
      const c = t.contrasts[0];
      return c.estimable ? (c.estimate as number) : NaN;
    };
    const sorted = entries.filter((t) => !Number.isNaN(effect(t))).sort((a, b) => effect(a) - effect(b));
    expect(rows.some((r) => r.startsWith(`${sorted[0].trial} `))).toBe(true);
    expect(rows.some((r) => r.startsWith(`${sorted[sorted.length - 1].trial} `))).toBe(true);
    expect(text).toContain(`the ${EXTREMES_EACH_END} lowest and ${EXTREMES_EACH_END} highest treated_vs_control`);
    expect(text).toMatch(/Flags over all trials: .*missing plots \d+/);
    // the trial without treatment B4 in every copy: listed (a serious flag) up to the cap
    expect(rows.filter((r) => r.includes('treatment absent')).length).toBeGreaterThan(0);
  });
});
