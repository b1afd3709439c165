// The example analysis on the demo workspace through the command: the JSON contract of
// DESIGN §5 is complete, the designed quirks are flagged and kept, and the rate response gives
// a pooled optimum with its interval, profitable range and the cautions — in JSON and as text.
import { beforeAll, describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { DEMO_MODEL, DEMO_TREATMENTS } from '../../src/demo/scenario.js';

const POOLED_KEYS = ['name', 'estimate', 'se', 'lower', 'upper', 'p', 'tau2', 'tau2Lower', 'tau2Upper', 'Q', 'Qdf', 'Qp', 'I2', 'H2', 'predictionLower', 'predictionUpper', 'probPositive', 'probAboveThreshold', 'k'];

interface Flag { code: string; plotId?: string | number | null }
interface Report {
  oneStage: { minusTwoLogLik: number; logLik: number; converged: boolean; iterations: number; variance: Record<string, unknown>; means: { treatment: string; estimate: number; se: number }[]; contrasts: { name: string; estimate: number; se: number; df: number; lower: number; upper: number; p: number }[] };
  twoStage: { trials: { trial: string; n: number; flags: Flag[]; contrasts: { name: string }[] }[]; pooled: (Record<string, unknown> & { metaRegression?: { coefficients: { term: string; estimate: number; se: number }[] } })[] };
  rateResponse: { pooled: { optimum: number; optimumLower: number; optimumUpper: number; profitableLower: number; profitableUpper: number; netReturnAtOptimum: number; yieldGainAtOptimum: number }; trials: { trial: string; model: string; optimum: number | null; converged: boolean }[]; cautions: string[] };
  warnings: string[];
  cautions: string[];
}

describe('analyze on the demo workspace', () => {
  const dir = tempDir();
  const ws = join(dir, 'demo.manyfield');
  const spec = join(process.cwd(), 'examples', 'demo-analysis.json');
  let report: Report;

  beforeAll(() => {
    expect(manyfield(['demo', '--workspace', ws]).status).toBe(0);
    const r = manyfield(['analyze', '--workspace', ws, '--spec', spec, '--json']);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    report = JSON.parse(r.stdout) as Report;
  });

  it('fills every key of the contract', () => {
    expect(report.twoStage.pooled.map((p) => p.name)).toEqual(['treated_vs_control', 'early_vs_late', 'rate_linear']);
    for (const p of report.twoStage.pooled) for (const k of POOLED_KEYS) expect(p, `pooled.${k}`).toHaveProperty(k);
    const o = report.oneStage;
    expect(o.converged).toBe(true);
    expect(Number.isFinite(o.logLik)).toBe(true);
    expect(o.minusTwoLogLik).toBeCloseTo(-2 * o.logLik, 6);
    expect(Object.keys(o.variance)).toEqual(expect.arrayContaining(['trial', 'block', 'treatment-by-trial', 'residualByTrial']));
    expect(o.means).toHaveLength(7);
    expect(o.contrasts.map((c) => c.name)).toEqual(['treated_vs_control', 'early_vs_late', 'rate_linear']);
    expect(report.twoStage.trials).toHaveLength(42);
  });

  it('flags the column-trend trial and the outlier, and drops neither', () => {
    const inc = report.twoStage.trials.find((t) => t.trial === 'INC-2023')!;
    expect(inc.flags.map((f) => f.code)).toContain('spatial-trend');
    expect(inc.n).toBe(28);
    const jes = report.twoStage.trials.find((t) => t.trial === 'JES-2024')!;
    expect(jes.flags.map((f) => f.code)).toContain('outlier-residual');
    expect(jes.n).toBe(28);
  });

  it('leaves the trial missing a treatment out of the custom-coefficient contrast only, with a warning; the comparison and trend follow what it tested', () => {
    const dun = report.warnings.filter((w) => w.includes('DUN-2025'));
    expect(dun).toHaveLength(1);
    expect(dun[0]).toMatch(/^contrast "treated_vs_control": pooled over 41 of 42 trials; .*DUN-2025 \(not tested here: B4/);
    const k = Object.fromEntries(report.twoStage.pooled.map((p) => [p.name, p.k]));
    expect(k).toEqual({ treated_vs_control: 41, early_vs_late: 42, rate_linear: 42 });
  });

  it('meta-regression on site-year rainfall and site organic matter recovers the stated model', () => {
    // Stated model (src/demo/scenario.ts): Gmax rises by gmaxRain per 100 mm of rainfall and
    // by gmaxOm per % organic matter; treated_vs_control averages Gmax (1 - exp(-c x)) over
    // the six treated treatments, so its true slopes are those coefficients times that average.
    const treated = DEMO_TREATMENTS.filter((t) => t.timing !== null);
    const share = treated.reduce((s, t) => s + (1 - Math.exp(-DEMO_MODEL.curvature * t.rate * DEMO_MODEL.efficiency[t.timing as string])), 0) / treated.length;
    const m = report.twoStage.pooled.find((p) => p.name === 'treated_vs_control')!.metaRegression!;
    const rain = m.coefficients.find((c) => c.term === 'rainfall')!;
    const om = m.coefficients.find((c) => c.term === 'organic_matter')!;
    // Within 3 standard errors of the truth (a false failure has probability ~0.003 each).
    expect(Math.abs(rain.estimate - (DEMO_MODEL.gmaxRain / 100) * share)).toBeLessThan(3 * rain.se);
    expect(Math.abs(om.estimate - DEMO_MODEL.gmaxOm * share)).toBeLessThan(3 * om.se);
  });

  it('gives a pooled economic optimum with interval and profitable range, and the cautions', () => {
    const p = report.rateResponse.pooled;
    expect(p.optimumLower).toBeLessThan(p.optimum);
    expect(p.optimum).toBeLessThan(p.optimumUpper);
    expect(p.profitableLower).toBeLessThanOrEqual(p.optimum);
    expect(p.optimum).toBeLessThanOrEqual(p.profitableUpper);
    expect(p.optimum).toBeGreaterThan(0);
    expect(p.optimum).toBeLessThanOrEqual(160);
    expect(p.yieldGainAtOptimum).toBeGreaterThan(p.netReturnAtOptimum);
    expect(report.rateResponse.trials).toHaveLength(42);
    expect(report.cautions.join(' ')).toMatch(/label/);
    expect(report.rateResponse.cautions.join(' ')).toMatch(/local agronomic advice/);
  });

  it('prints the same as a readable table with the cautions when --json is not given', () => {
    const r = manyfield(['analyze', '--workspace', ws, '--spec', spec, '--no-save']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/Recommended rate: /);
    expect(r.stdout).toMatch(/Rates whose mean net return is within 0\.02 t\/ha of the best: /);
    expect(r.stdout).toMatch(/label limits/);
    expect(r.stdout).toMatch(/treated_vs_control/);
    const optimum = report.rateResponse.pooled.optimum;
    expect(r.stdout).toContain(`Recommended rate: ${optimum.toFixed(1)} kg/ha`);
    // the one-stage model in the trade's words, its terms named in words
    expect(r.stdout).toMatch(/Restricted \(REML\) log-likelihood/);
    expect(r.stdout).toMatch(/treatment × trial/);
    expect(r.stdout).not.toMatch(/REML criterion|singular fit|residualByTrial|treatment:trial/);
  });

  it('shows the new-site interval and the method that made it (bootstrap-tau2 by default), in JSON and as text, with the plug-in t interval beside it', () => {
    for (const p of report.twoStage.pooled) {
      const n = p.prediction as { method: string; lower: number; upper: number; draws: number; seed: number; plugInT: { lower: number; upper: number } };
      expect(n.method).toBe('bootstrap-tau2');
      expect(p.predictionLower).toBe(n.lower);
      expect(p.predictionUpper).toBe(n.upper);
      expect(n.lower).toBeLessThan(p.estimate as number);
      expect(n.upper).toBeGreaterThan(p.estimate as number);
      expect(Number.isFinite(n.plugInT.lower)).toBe(true);
      expect((p.method as { prediction: string }).prediction).toMatch(/bootstrap-tau2.*20000 draws, seed 20190601/);
    }
    const one = (report.oneStage as unknown as { newSite: { name: string; method: string; lower: number; upper: number; plugInT: { lower: number } }[] }).newSite;
    expect(one.map((n) => n.name)).toEqual(report.oneStage.contrasts.map((c) => c.name));
    for (const n of one) {
      expect(n.method).toBe('bootstrap-tau2');
      expect(n.lower).toBeLessThan(n.upper);
      expect(Number.isFinite(n.plugInT.lower)).toBe(true);
    }
    const r = manyfield(['analyze', '--workspace', ws, '--spec', spec, '--no-save']);
    expect(r.stdout).toMatch(/prediction interval\) +method[\s\S]*treated_vs_control [^\n]*bootstrap-tau2/);
    for (const p of report.twoStage.pooled) expect(r.stdout).toMatch(new RegExp(`${p.name}: new-site interval by bootstrap over the confidence distribution of tau² \\(bootstrap-tau2, 20000 draws`));
  });

  it('fits a fixed rainfall slope in the one-stage model when the spec names it, in JSON and as text', () => {
    const specFile = join(dir, 'covariate.json');
    writeFileSync(
      specFile,
      JSON.stringify({ trait: 'yield', control: 'CTL', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }], twoStage: null, oneStage: { residual: 'common', covariates: ['rainfall'], lrt: false } }),
    );
    const r = manyfield(['analyze', '--workspace', ws, '--spec', specFile, '--json', '--no-save']);
    expect(r.status).toBe(0);
    const o = (JSON.parse(r.stdout) as { oneStage: { covariates: { name: string; estimate: number; se: number; df: number; centre: number }[]; options: { covariates: string[] } } }).oneStage;
    expect(o.options.covariates).toEqual(['rainfall']);
    expect(o.covariates.map((c) => c.name)).toEqual(['rainfall']);
    const [slope] = o.covariates;
    expect(slope.se).toBeGreaterThan(0);
    expect(slope.df).toBeGreaterThan(1);
    // the centre is the mean rainfall over the demo's 42 site-years (mm)
    expect(slope.centre).toBeGreaterThan(100);
    expect(slope.centre).toBeLessThan(1500);
    const text = manyfield(['analyze', '--workspace', ws, '--spec', specFile, '--no-save']);
    expect(text.stdout).toMatch(/covariate slope[\s\S]*rainfall/);
  });
});
