// The crossed one-stage model (sites and years beside the site-year trial) against R's lme4
// (lmer, REML, bobyqa tightened) and lmerTest (contest Satterthwaite; rand likelihood-ratio per
// term) with the same random terms, on unbalanced networks drawn with fixed seeds: not every site
// runs every year and some plots are missing. Tolerances as in issue 15: REML log-likelihood 1e-6
// relative; variance components 1e-4 relative; treatment means, contrasts and SEs 1e-5 relative;
// Satterthwaite df 1e-3 relative; likelihood-ratio statistics 1e-4 absolute (relative when large).
import { describe, expect, it } from 'vitest';
import { fitCrossed } from '../../../../src/engine/onestage/crossed/fitCrossed.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import type { ResolvedContrast } from '../../../../src/engine/contrasts/resolve.js';
import { relDiff, rVector } from '../../../support/rscript.js';
import { simulateCrossed } from './support/simulateCrossed.js';
import { R_GROUP, runLmerCrossed } from './support/lmerCrossed.js';

function contrastsFor(codes: readonly string[]): ResolvedContrast[] {
  const vs = (a: string, b: string): ResolvedContrast => ({ name: `${a}-${b}`, kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c) => [c, c === a ? 1 : c === b ? -1 : 0])), divisor: 1, meaning: '' });
  const linear: ResolvedContrast = { name: 'linear', kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c, i) => [c, i - (codes.length - 1) / 2])), divisor: 1, meaning: '' };
  return [vs('T1', 'CTL'), vs('T4', 'T2'), linear];
}

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];

describe('crossed one-stage model vs lme4 / lmerTest', () => {
  for (const setting of [
    { seed: 11, sites: 14, years: 5, terms: ALL, yearAsFixed: false, lrt: true },
    { seed: 23, sites: 10, years: 4, terms: ['site', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: true, lrt: false },
    { seed: 37, sites: 16, years: 3, terms: ['year', 'trial', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: false, lrt: true },
  ]) {
    it(`matches on ${setting.sites} sites over ${setting.years} years (seed ${setting.seed}; ${setting.terms.join(', ')}${setting.yearAsFixed ? '; years fixed' : ''})`, () => {
      const sim = simulateCrossed({ seed: setting.seed, sites: setting.sites, years: setting.years, runProbability: 0.7, missing: 0.06, sd: { site: 1.2, year: 0.8 } });
      const codes = sim.network.treatments.map((t) => t.code);
      const contrasts = contrastsFor(codes);
      const rows = contrasts.map((c) => codes.map((t) => c.coefficients[t] / c.divisor));
      const r = runLmerCrossed(sim.csv, codes, rows, setting.terms, setting.yearAsFixed, setting.lrt);
      const fit = fitCrossed(sim.network, contrasts, { random: setting.terms, yearAsFixed: setting.yearAsFixed, df: 'satterthwaite', confidence: 0.95, lrt: setting.lrt, profile: false });
      expect(fit.converged).toBe(true);
      // never worse than lme4 (1e-8 slack for rounding), and the same optimum
      expect(fit.minusTwoLogLik).toBeLessThanOrEqual(r.values.remlcrit + 1e-8);
      expect(relDiff(fit.minusTwoLogLik, r.values.remlcrit)).toBeLessThan(1e-6);
      expect(relDiff(fit.logLik, r.values.loglik)).toBeLessThan(1e-6);
      for (const term of setting.terms) expect(relDiff(fit.variance[term]!, r.values[`v_${R_GROUP[term]}`]), term).toBeLessThan(1e-4);
      expect(relDiff(fit.variance.residual!, r.values.v_Residual)).toBeLessThan(1e-4);
      const fixef = rVector(r, 'fixef');
      const fixse = rVector(r, 'fixse');
      fit.means.forEach((m, j) => {
        expect(relDiff(m.estimate, fixef[j])).toBeLessThan(1e-5);
        expect(relDiff(m.se, fixse[j])).toBeLessThan(1e-5);
      });
      fit.contrasts.forEach((c, i) => {
        expect(relDiff(c.estimate!, r.values[`est${i + 1}`])).toBeLessThan(1e-5);
        expect(relDiff(c.se!, r.values[`se${i + 1}`])).toBeLessThan(1e-5);
        expect(relDiff(c.df!, r.values[`sdf${i + 1}`])).toBeLessThan(1e-3);
      });
      if (setting.lrt)
        for (const term of setting.terms) {
          const test = fit.varianceComponents.find((v) => v.name === term)!.lrt!;
          const ref = r.values[`lrt_${R_GROUP[term]}`];
          // lme4's refit can stop short near a boundary (it warns so): then ours must be the better
          // optimum of the reduced model (higher REML log-likelihood), otherwise the statistics agree
          const oursBetter = test.reducedLogLik > r.values[`rll_${R_GROUP[term]}`] + 1e-6;
          if (!oursBetter) expect(Math.abs(test.statistic - ref), term).toBeLessThan(1e-4 * Math.max(1, ref));
          expect(test.reducedLogLik, term).toBeGreaterThanOrEqual(r.values[`rll_${R_GROUP[term]}`] - 1e-6 * Math.abs(r.values[`rll_${R_GROUP[term]}`]));
        }
    }, 300_000);
  }
});
