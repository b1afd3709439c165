// `manyfield analyze --data F --spec S --json` with the crossed one-stage model and a residual
// variance per trial (oneStage.residual "per-trial"; site, year, trial, block and the three
// treatment-by terms) on an unbalanced network generated here and not used elsewhere (10 sites
// over 4 years with gaps, 6% of plots missing, each trial's residual sd drawn around a common
// one), against glmmTMB (dispformula = ~ env, REML = TRUE) on the same file: REML log-likelihood
// within 1e-4 absolute; the terms' variances, each trial's residual variance and the contrasts to
// 2e-3 relative (glmmTMB's optimiser tolerance; the GLS and df checks are in
// test/engine/onestage/crossed/perTrialResidualR.test.ts). Also: a trial with no residual df of
// its own is refused, naming it.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { relDiff, rVector, type RRun } from '../support/rscript.js';
import { simulateCrossed } from '../engine/onestage/crossed/support/simulateCrossed.js';
import { runTmbCrossed, TMB_GROUP } from '../engine/onestage/crossed/support/tmbCrossed.js';

const TERMS = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
interface Report {
  oneStage: {
    logLik: number;
    converged: boolean;
    variance: Record<string, number> & { residualByTrial: Record<string, number> };
    varianceComponents: { name: string; estimate: number }[];
    contrasts: { name: string; estimate: number; se: number; df: number }[];
    siteYearView: { split: { part: string; variance: number }[]; contrasts: { newSiteNewYear: { lower: number; upper: number } }[] };
  };
}
let report: Report;
let r: RRun;
let dir: string;
let csv: string;
const columns = { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y' };
const specFor = (extra: object) =>
  JSON.stringify({
    trait: 'y',
    columns,
    control: 'CTL',
    contrasts: [{ name: 'T1 vs CTL', coefficients: { T1: 1, CTL: -1 } }, { name: 'T3 vs T2', coefficients: { T3: 1, T2: -1 } }],
    twoStage: null,
    oneStage: { random: TERMS, residual: 'per-trial', lrt: false, profile: false, prediction: 'plug-in-t', ...extra },
  });

beforeAll(() => {
  dir = tempDir();
  const sim = simulateCrossed({ seed: 8080, sites: 10, years: 4, runProbability: 0.65, missing: 0.06, residualSpread: 0.5, treatments: 4 });
  csv = sim.csv;
  writeFileSync(join(dir, 'net.csv'), csv);
  writeFileSync(join(dir, 'spec.json'), specFor({}));
  const run = manyfield(['analyze', '--data', join(dir, 'net.csv'), '--spec', join(dir, 'spec.json'), '--json']);
  if (run.status !== 0) throw new Error(run.stderr);
  report = JSON.parse(run.stdout) as Report;
  const envs = Object.keys(report.oneStage.variance.residualByTrial);
  r = runTmbCrossed(csv, ['CTL', 'T1', 'T2', 'T3'], [[-1, 1, 0, 0], [0, 0, -1, 1]], TERMS, envs);
}, 900_000);

describe('analyze --data with sites and years crossed and a residual per trial, against glmmTMB on the same file', () => {
  it('log-likelihood, variances, per-trial residuals and contrasts match', () => {
    const o = report.oneStage;
    console.log(`ours ${o.logLik} glmmTMB ${r.values.loglik}`);
    expect(o.converged).toBe(true);
    expect(Math.abs(o.logLik - r.values.loglik)).toBeLessThan(1e-4);
    const residuals = o.variance.residualByTrial;
    const scale = Math.max(...Object.values(residuals));
    for (const t of TERMS) expect(Math.abs(o.variance[t] - r.values[`v_${TMB_GROUP[t]}`]) / Math.max(r.values[`v_${TMB_GROUP[t]}`], 1e-2 * scale), t).toBeLessThan(2e-3);
    const res = rVector(r, 'res');
    Object.values(residuals).forEach((v, i) => expect(relDiff(v, res[i])).toBeLessThan(2e-3));
    expect(o.varianceComponents.filter((c) => c.name.startsWith('residual (')).length).toBe(res.length);
    o.contrasts.forEach((c, i) => expect(relDiff(c.estimate, r.values[`est${i + 1}`])).toBeLessThan(2e-3));
    expect(o.contrasts.every((c) => c.df > 1)).toBe(true);
  });
  it('carries the site / year / site-year split', () => {
    const v = report.oneStage.siteYearView;
    expect(v.split.map((s) => s.part)).toEqual(['site', 'year', 'site-year']);
    expect(relDiff(v.split[0].variance, report.oneStage.variance['treatment-by-site'])).toBeLessThan(1e-12);
    for (const c of v.contrasts) expect(c.newSiteNewYear.lower).toBeLessThan(c.newSiteNewYear.upper);
  });
  it('refuses a trial with no residual df of its own, naming it', () => {
    // the first trial keeps its first block and one plot of its second: blocks and treatments
    // then use every plot, nothing is left for its own residual
    const lines = csv.trim().split('\n');
    const first = lines[1].split(',')[2];
    const second = lines.findIndex((l) => l.split(',')[2] === first && l.split(',')[3] === 'B2');
    const kept = lines.filter((l, i) => i === 0 || i === second || l.split(',')[2] !== first || l.split(',')[3] === 'B1');
    writeFileSync(join(dir, 'thin.csv'), kept.join('\n') + '\n');
    const run = manyfield(['analyze', '--data', join(dir, 'thin.csv'), '--spec', join(dir, 'spec.json'), '--json']);
    expect(run.status).not.toBe(0);
    expect(run.stderr).toContain(`no residual degrees of freedom of their own`);
    expect(run.stderr).toContain(first);
  });
});
