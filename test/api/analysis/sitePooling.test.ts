// The site-and-trial pooling through runAnalysis (twoStage.levels "site-and-trial"): it pools
// exactly the trials and estimates the trial-level pool used, grouped by the trials' sites, and the
// text summary restates it. The engine's numbers themselves are checked against R in
// test/engine/pooling/multilevel/siteLevelsR.test.ts; here the reference is the engine called
// directly on the trial stage's own estimates (exact equality: the same inputs give the same bits).
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../../../src/api/analysis/runAnalysis.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../../src/engine/types.js';
import { poolSiteLevels } from '../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import { formatAnalysisText } from '../../../src/report/text/formatAnalysisText.js';
import { rowsFromColumns } from '../../../src/engine/pooling/compactPooled.js';
import { ManyfieldError } from '../../../src/api/result.js';
import { fitCrossedYear } from '../../../src/engine/pooling/multilevel/fitCrossedYear.js';
import { groupBySite } from '../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import { chisqQuantile } from '../../../src/engine/stats/distributions.js';
import { readFileSync } from 'node:fs';
import { generateDemoNetwork } from '../../../src/demo/generate.js';
import { networkFromTable } from '../../../src/api/analysis/networkFromTable.js';
import { DEMO_YEARS } from '../../../src/demo/scenario.js';

/** Sites over years with gaps; each site has its own response to T (invented, for behaviour only). */
function network(seed: number, dropSite = false): NetworkInput {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const trials: TrialInput[] = [];
  for (let s = 1; s <= 8; s++) {
    const siteGain = 0.7 * z();
    for (let year = 2019; year <= 2023; year++) {
      if (u() < 0.3) continue;
      const gain = 1 + siteGain + 0.3 * z();
      const plots: PlotObservation[] = [];
      for (let b = 1; b <= 3; b++)
        for (const t of ['CTL', 'T']) plots.push({ treatment: t, block: String(b), row: null, col: null, value: 5 + (t === 'T' ? gain : 0) + 0.4 * z() });
      trials.push({ trial: `S${s}-${year}`, ...(dropSite && s === 1 ? {} : { site: `S${s}` }), year, design: 'randomised-blocks', plots });
    }
  }
  return { trait: 'yield', factors: [], treatments: [{ code: 'CTL', levels: {} }, { code: 'T', levels: {} }], control: 'CTL', trials };
}

const spec = (twoStage: Record<string, unknown>) => analysisSpecSchema.parse({ contrasts: [{ name: 'gain', coefficients: { CTL: -1, T: 1 } }], oneStage: null, twoStage });

describe('twoStage.levels "site-and-trial"', () => {
  it('pools the trial-level pool’s trials by site, identical to the engine on the same estimates', () => {
    const report = runAnalysis(network(3), spec({ levels: 'site-and-trial' }));
    const p = report.twoStage.pooled[0];
    expect(p.siteLevels).toBeDefined();
    const used = new Set(rowsFromColumns(p.weights).map((w) => w.trial));
    const items = report.twoStage.trials.flatMap((t) => {
      const c = t.contrasts.find((x) => x.name === 'gain') as { estimate: number; se: number };
      return used.has(t.trial) ? [{ trial: t.trial, site: t.trial.split('-')[0], estimate: c.estimate, se: c.se }] : [];
    });
    expect(items.length).toBe(p.k);
    expect(p.siteLevels).toEqual(poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold: 0, prediction: 'bootstrap-tau2', predictionDraws: 1000, predictionSeed: 20190601 }));
    expect(p.siteLevels!.sites).toBe(8);
    const text = formatAnalysisText({ ...report, provenance: { source: 'test', dataFingerprint: 'abcdef123456', appVersion: '0', createdAt: '' } });
    expect(text).toContain('Effects pooled with trials nested in sites (restricted maximum likelihood (REML))');
    expect(p.siteLevels!.newSitePrediction!.method).toBe('bootstrap-pivot');
    expect(text).toContain('new-site interval and probabilities by parametric bootstrap of the studentised prediction error');
    expect(text).toContain('Is the spread repeatable by site or seasonal?');
    expect(text).toContain(`Caution: ${p.siteLevels!.caution}`);
  });

  it('is absent by default and uses ML when tau2 is "ml"', () => {
    expect(runAnalysis(network(3), spec({})).twoStage.pooled[0].siteLevels).toBeUndefined();
    expect(runAnalysis(network(3), spec({ levels: 'site-and-trial', tau2: 'ml' })).twoStage.pooled[0].siteLevels!.method).toMatch(/ML/);
  });

  it('refuses a moment estimator with a message naming the options', () => {
    expect(() => runAnalysis(network(3), spec({ levels: 'site-and-trial', tau2: 'dl' }))).toThrow(ManyfieldError);
    expect(() => runAnalysis(network(3), spec({ levels: 'site-and-trial', tau2: 'dl' }))).toThrow(/set twoStage.tau2 to "reml" or "ml" \(got "dl"\)/);
  });

  it('counts a trial without a site as a site of its own, with a warning', () => {
    const report = runAnalysis(network(3, true), spec({ levels: 'site-and-trial' }));
    expect(report.warnings.join('\n')).toMatch(/trial\(s\) have no site and count as a site of their own: S1-/);
    const sites = report.twoStage.pooled[0].siteLevels!.siteEstimates.map((s) => s.site);
    expect(sites.filter((s) => s.startsWith('S1-')).length).toBeGreaterThan(0);
  });

  it('"site-year-and-trial" adds the year tau², as the crossed engine fit gives it on the same trials', () => {
    const report = runAnalysis(network(3), spec({ levels: 'site-year-and-trial' }));
    const s = report.twoStage.pooled[0].siteLevels!;
    expect(s.levels).toBe('site-year-and-trial');
    const items = report.twoStage.trials.map((t) => {
      const c = t.contrasts.find((x) => x.name === 'gain') as { estimate: number; se: number };
      return { trial: t.trial, site: t.trial.split('-')[0], year: Number(t.trial.split('-')[1]), estimate: c.estimate, se: c.se };
    });
    const years = [...new Set(items.map((i) => i.year))].sort();
    const groups = groupBySite(items).map((g) => ({ ...g, yearIndex: Int32Array.from(g.trials, (t) => years.indexOf(Number(t.split('-')[1]))) }));
    const fit = fitCrossedYear(groups, years.length, 'reml', chisqQuantile(0.95, 1));
    expect(s.years).toBe(years.length);
    expect([s.siteTau2, s.yearTau2, s.trialTau2, s.estimate, s.logLik]).toEqual([fit.siteTau2, fit.yearTau2, fit.trialTau2, fit.mu, fit.logLik]);
    expect(s.yearTau2Upper).toEqual(fit.intervals!.year.upper);
    expect(s.I2Site! + s.I2Year! + s.I2Trial!).toBeCloseTo(s.I2Total!, 12);
    const text = formatAnalysisText({ ...report, provenance: { source: 'test', dataFingerprint: 'abcdef123456', appVersion: '0', createdAt: '' } });
    expect(text).toContain('crossed with years');
    expect(text).toMatch(/year tau² \(95% profile\)/);
  });

  it('the example spec examples/sites-over-years.json runs on the demo network', () => {
    const example = analysisSpecSchema.parse(JSON.parse(readFileSync(new URL('../../../examples/sites-over-years.json', import.meta.url), 'utf8')));
    const report = runAnalysis(networkFromTable(generateDemoNetwork().table, 'yield'), example);
    for (const p of report.twoStage.pooled) {
      expect(p.siteLevels?.levels).toBe('site-year-and-trial');
      expect(p.siteLevels?.years).toBe(DEMO_YEARS.length);
      expect(p.siteLevels?.converged).toBe(true);
    }
  });
});
