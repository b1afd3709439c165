// The one-stage model with sites and years through runAnalysis: the example spec runs on the
// demo network and carries the committee view; the split's shares add up; the text summary
// restates it; terms the data cannot identify are refused in the user's terms. The engine's
// numbers are checked against lme4 in test/engine/onestage/crossed/.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../../../src/api/analysis/runAnalysis.js';
import { networkFromTable } from '../../../src/api/analysis/networkFromTable.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { generateDemoNetwork } from '../../../src/demo/generate.js';
import { DEMO_SITES, DEMO_YEARS } from '../../../src/demo/scenario.js';
import { formatAnalysisText } from '../../../src/report/text/formatAnalysisText.js';
import { ManyfieldError } from '../../../src/api/result.js';
import { tQuantile } from '../../../src/engine/stats/distributions.js';

const demo = networkFromTable(generateDemoNetwork().table, 'yield');

describe('one-stage model with sites and years, through runAnalysis', () => {
  it('the example spec examples/sites-over-years-one-stage.json runs on the demo network', () => {
    const example = analysisSpecSchema.parse(JSON.parse(readFileSync(new URL('../../../examples/sites-over-years-one-stage.json', import.meta.url), 'utf8')));
    const report = runAnalysis(demo, { ...example, oneStage: { ...example.oneStage!, lrt: false } });
    const o = report.oneStage!;
    expect(o.converged).toBe(true);
    expect(Object.keys(o.variance).sort()).toEqual(['block', 'residual', 'site', 'treatment-by-site', 'treatment-by-trial', 'treatment-by-year', 'trial', 'year']);
    const v = o.siteYearView!;
    expect(v.sites).toBe(DEMO_SITES.length);
    expect(v.years).toBe(DEMO_YEARS.length);
    expect(v.split.reduce((s, x) => s + (x.share ?? 0), 0)).toBeCloseTo(1, 12);
    expect(v.siteRepeatability).toBe(v.split[0].share);
    for (const c of v.contrasts) {
      const r = o.contrasts.find((x) => x.name === c.name)!;
      // the new-site-new-year interval is wider than the mean's own interval
      expect(c.newSiteNewYear!.lower).toBeLessThan(r.lower!);
      expect(c.newSiteNewYear!.upper).toBeGreaterThan(r.upper!);
      expect(c.nextYearAtSite).toHaveLength(DEMO_SITES.length);
      // by default the bootstrap (oneStage.prediction "bootstrap-tau2"), with the plug-in beside it
      const n = c.newSiteNewYear!;
      expect(n.method).toBe('bootstrap-pivot');
      expect(n.draws).toBe(1000);
      expect(n.seed).toBe(20190601);
      expect(n.probPositive).toBeGreaterThanOrEqual(0);
      expect(n.probAboveThreshold).toBeLessThanOrEqual(n.probPositive!);
      const newSiteHalf = (n.plugInT!.upper - n.plugInT!.lower) / 2;
      for (const s of c.nextYearAtSite) {
        expect(s.pastYears).toEqual([...DEMO_YEARS]);
        // both intervals on t(sites - 2) (1e-12 relative): a known site's interval is narrower
        // than a new site's here, as it carries no between-site variance
        const half = (s.upper - s.lower) / 2;
        expect(half / s.predictionSe).toBeCloseTo(newSiteHalf / c.newSiteNewYear!.sd, 12);
        expect(half).toBeLessThan(newSiteHalf);
      }
    }
    const text = formatAnalysisText({ ...report, provenance: { source: 'demo', dataFingerprint: '0'.repeat(64) } } as Parameters<typeof formatAnalysisText>[0]);
    expect(text).toMatch(/Is the response repeatable by site or seasonal\? \(one-stage, sites and years\)/);
    expect(text).toMatch(/Next year at each known site \(one-stage\)/);
    expect(text).toMatch(/rests on that site's past years only/);
    expect(text).toMatch(/treated_vs_control .* bootstrap-pivot /);
    expect(text).toMatch(/new site in a new year: parametric bootstrap of the studentised prediction error/);
  }, 600_000);

  it('oneStage.prediction "plug-in-t" gives the plug-in new-site-new-year interval and says so', () => {
    const example = analysisSpecSchema.parse(JSON.parse(readFileSync(new URL('../../../examples/sites-over-years-one-stage.json', import.meta.url), 'utf8')));
    const report = runAnalysis(demo, { ...example, twoStage: null, oneStage: { ...example.oneStage!, lrt: false, prediction: 'plug-in-t' } });
    for (const c of report.oneStage!.siteYearView!.contrasts) {
      const n = c.newSiteNewYear!;
      expect(n.method).toBe('plug-in-t');
      expect(n.draws).toBeNull();
      expect(n.lower).toBe(n.plugInT!.lower);
      // the fit's own plug-in interval: estimate ± t(sites - 2) sd (1e-12)
      expect(n.df).toBe(DEMO_SITES.length - 2);
      expect(Math.abs(n.upper - (c.estimate! + tQuantile(0.975, n.df) * n.sd))).toBeLessThan(1e-12);
    }
    expect(report.oneStage!.siteYearView!.method).toMatch(/^new site in a new year: estimate ± t\(sites - 2\).*\(plug-in-t\)/);
  }, 600_000);

  it('refuses site with trial when every site has one trial, and a year term with one year', () => {
    const oneYear = { ...demo, trials: demo.trials.filter((t) => t.year === 2024) };
    const spec = (random: string[]) => analysisSpecSchema.parse({ trait: 'yield', control: 'CTL', contrasts: [{ name: 'g', coefficients: { A2: 1, CTL: -1 } }], twoStage: null, oneStage: { random, lrt: false } });
    expect(() => runAnalysis(oneYear, spec(['site', 'trial']))).toThrow(ManyfieldError);
    expect(() => runAnalysis(oneYear, spec(['site', 'trial']))).toThrow(/"site" and "trial" cannot both be fitted: every site has one trial/);
    expect(() => runAnalysis(oneYear, spec(['trial', 'treatment-by-site']))).toThrow(/"treatment-by-site" cannot be told apart .* no site has more than one trial/);
    expect(() => runAnalysis(oneYear, spec(['trial', 'year']))).toThrow(/"year" needs trials in at least two years/);
    // refused when the spec is read, with the word to write (the message sits in the schema's JSON, quotes escaped)
    expect(() => spec(['trial', 'treatment:site'])).toThrow(/formula notation this spec does not accept; write \\"treatment-by-site\\"/);
  });
});
