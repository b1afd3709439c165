// `manyfield analyze --data F --spec S --json` with the crossed one-stage model (site, year,
// trial, block and the three treatment-by terms) on an unbalanced network generated here and not
// used elsewhere (12 sites over 5 years with gaps, 6% of plots missing), checked against lme4's
// lmer with the same terms and lmerTest's Satterthwaite df on the same file. Tolerances as in
// the engine check: REML log-likelihood 1e-6 relative, variance components 1e-4, contrasts and
// SEs 1e-5, df 1e-3. Also: a term the file cannot identify is refused in the user's terms.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { relDiff, type RRun } from '../support/rscript.js';
import { simulateCrossed } from '../engine/onestage/crossed/support/simulateCrossed.js';
import { R_GROUP, runLmerCrossed } from '../engine/onestage/crossed/support/lmerCrossed.js';

const TERMS = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
interface Report {
  oneStage: {
    logLik: number;
    variance: Record<string, number>;
    contrasts: { name: string; estimate: number; se: number; df: number }[];
    siteYearView: { split: { part: string; variance: number }[]; siteRepeatability: number; contrasts: { name: string; newSiteNewYear: { lower: number; upper: number }; nextYearAtSite: unknown[] }[] };
  };
}
let report: Report;
let r: RRun;
let dir: string;
const columns = { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y' };

beforeAll(() => {
  dir = tempDir();
  const sim = simulateCrossed({ seed: 5150, sites: 12, years: 5, runProbability: 0.65, missing: 0.06, sd: { site: 1.1, year: 0.9 } });
  writeFileSync(join(dir, 'net.csv'), sim.csv);
  const spec = {
    trait: 'y',
    columns,
    control: 'CTL',
    contrasts: [{ name: 'T1 vs CTL', coefficients: { T1: 1, CTL: -1 } }, { name: 'T3 vs T2', coefficients: { T3: 1, T2: -1 } }],
    twoStage: null,
    oneStage: { random: TERMS, lrt: false, profile: false },
  };
  writeFileSync(join(dir, 'spec.json'), JSON.stringify(spec));
  const run = manyfield(['analyze', '--data', join(dir, 'net.csv'), '--spec', join(dir, 'spec.json'), '--json']);
  if (run.status !== 0) throw new Error(run.stderr);
  report = JSON.parse(run.stdout) as Report;
  const codes = ['CTL', 'T1', 'T2', 'T3', 'T4'];
  r = runLmerCrossed(sim.csv, codes, [[-1, 1, 0, 0, 0], [0, 0, -1, 1, 0]], TERMS, false, false);
}, 900_000);

describe('analyze --data with sites and years crossed, against lme4 on the same file', () => {
  it('log-likelihood, variance components, contrasts, SEs and Satterthwaite df match', () => {
    const o = report.oneStage;
    expect(relDiff(o.logLik, r.values.loglik)).toBeLessThan(1e-6);
    for (const t of TERMS) expect(relDiff(o.variance[t], r.values[`v_${R_GROUP[t]}`]), t).toBeLessThan(1e-4);
    expect(relDiff(o.variance.residual, r.values.v_Residual)).toBeLessThan(1e-4);
    o.contrasts.forEach((c, i) => {
      expect(relDiff(c.estimate, r.values[`est${i + 1}`])).toBeLessThan(1e-5);
      expect(relDiff(c.se, r.values[`se${i + 1}`])).toBeLessThan(1e-5);
      expect(relDiff(c.df, r.values[`sdf${i + 1}`])).toBeLessThan(1e-3);
    });
  });
  it('carries the site / year / site-year split and the predictions', () => {
    const v = report.oneStage.siteYearView;
    expect(v.split.map((s) => s.part)).toEqual(['site', 'year', 'site-year']);
    expect(relDiff(v.split[0].variance, r.values['v_site:trt'])).toBeLessThan(1e-4);
    const total = v.split.reduce((s, x) => s + x.variance, 0);
    expect(v.siteRepeatability).toBeCloseTo(v.split[0].variance / total, 12);
    for (const c of v.contrasts) {
      expect(c.newSiteNewYear.lower).toBeLessThan(c.newSiteNewYear.upper);
      expect(c.nextYearAtSite).toHaveLength(12);
    }
  });
  it('refuses treatment-by-year when the file has one year, saying so', () => {
    const one = simulateCrossed({ seed: 9, sites: 6, years: 1 });
    writeFileSync(join(dir, 'one.csv'), one.csv);
    writeFileSync(join(dir, 'one.json'), JSON.stringify({ trait: 'y', columns, control: 'CTL', contrasts: [{ name: 'g', coefficients: { T1: 1, CTL: -1 } }], twoStage: null, oneStage: { random: ['trial', 'treatment-by-year'] } }));
    const run = manyfield(['analyze', '--data', join(dir, 'one.csv'), '--spec', join(dir, 'one.json'), '--json']);
    expect(run.status).not.toBe(0);
    expect(run.stderr).toMatch(/"treatment-by-year" needs trials in at least two years/);
  });
});
