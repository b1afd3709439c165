// A saved analysis is split into rows (migration 0004): one analysis_trial row per trial, each
// pool's headline apart from its per-trial tables, the one-stage headline apart from its
// per-trial results. Reference: the report that was saved — loading it back must give it whole
// (trials in their summary form, pools column by column), and deleting the analysis removes
// every row (ON DELETE CASCADE).
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadAnalysis, loadAnalysisSummary, openWorkspace, saveAnalysis } from '../../src/store/index.js';
import { listAnalysisTrials } from '../../src/store/analysisTrials.js';
import { compactPooled } from '../../src/engine/pooling/compactPooled.js';
import { poolEstimates } from '../../src/engine/pooling/poolEstimates.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();

describe('saved analyses, one row per trial', () => {
  const items = Array.from({ length: 6 }, (_, i) => ({ trial: `T${i}`, estimate: 1 + 0.2 * Math.sin(i), se: 0.3 + 0.05 * i, year: 2020 + i }));
  const pooled = { name: 'c', meaning: 'm', leftOut: [], ...poolEstimates(items, { tau2: 'reml', interval: 'hksj', confidence: 0.95, threshold: 0 }) };
  const trials = items.map((it) => ({ trial: it.trial, contrasts: [{ name: 'c', estimate: it.estimate, se: it.se, df: 10 }] }));
  const report = {
    trait: 'yield',
    oneStage: { logLik: -3.5, trials: [{ trial: 'T0', contrasts: [] }] },
    twoStage: { trials, pooled: [pooled] },
    warnings: ['w'],
  };

  it('stores the trials one row each and gives the report back whole', () => {
    const ws = openWorkspace(path.join(newDir(), 'w.manyfield'), { create: true });
    try {
      const id = saveAnalysis(ws, { trait: 'yield' }, 'f'.repeat(64), report);
      expect(listAnalysisTrials(ws, id).map((t) => t.trial)).toEqual(items.map((it) => it.trial));
      const back = loadAnalysis(ws, id).results;
      expect(back).toEqual(JSON.parse(JSON.stringify({ ...report, twoStage: { trials, pooled: [compactPooled(pooled)] } })));
      const summary = loadAnalysisSummary(ws, id).results as { oneStage: Record<string, unknown>; twoStage: { pooled: Record<string, unknown>[]; trialCount: number } };
      expect(summary.twoStage.trialCount).toBe(6);
      expect(summary.twoStage.pooled[0].weights).toBeUndefined();
      expect(summary.twoStage.pooled[0].estimate).toBe(pooled.estimate);
      expect(summary.oneStage).toEqual({ logLik: -3.5 });
      ws.db.prepare('DELETE FROM analysis WHERE id = ?').run(id);
      expect(ws.db.prepare('SELECT count(*) AS n FROM analysis_trial').get()).toEqual({ n: 0 });
      expect(ws.db.prepare('SELECT count(*) AS n FROM analysis_result').get()).toEqual({ n: 0 });
    } finally {
      ws.close();
    }
  });
});
