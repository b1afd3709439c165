// Kenward–Roger df and adjusted standard errors of the crossed one-stage model (common residual)
// against R's pbkrtest (vcovAdj, Lb_ddf) on lme4's lmer fit with the same random terms, on
// unbalanced networks drawn with fixed seeds (not every site every year, some plots missing), for
// every contrast and every treatment mean. Two comparisons: at lmer's own REML optimum (an
// independent fit: df to 1e-3 relative, adjusted SE to 1e-6 relative), and at our estimates
// (lmer evaluated there without optimising: df to 1e-9, adjusted SE to 1e-10, the computation
// itself; seen: 6e-13 and 1e-13). Term sets: all seven; site + year + trial + block +
// treatment-by-site; no site term (E's blocks are then the trials); fixed years with no year term
// (no year part U). Also: the unadjusted SE is still reported, and the adjusted one is never smaller.
import { describe, expect, it } from 'vitest';
import { fitCrossed } from '../../../../src/engine/onestage/crossed/fitCrossed.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import type { ResolvedContrast } from '../../../../src/engine/contrasts/resolve.js';
import { relDiff } from '../../../support/rscript.js';
import { simulateCrossed } from './support/simulateCrossed.js';
import { R_GROUP } from './support/lmerCrossed.js';
import { runPbkrtestCrossed } from './support/pbkrtestCrossed.js';

function contrastsFor(codes: readonly string[]): ResolvedContrast[] {
  const vs = (a: string, b: string): ResolvedContrast => ({ name: `${a}-${b}`, kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c) => [c, c === a ? 1 : c === b ? -1 : 0])), divisor: 1, meaning: '' });
  const linear: ResolvedContrast = { name: 'linear', kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c, i) => [c, i - (codes.length - 1) / 2])), divisor: 1, meaning: '' };
  return [vs('T1', 'CTL'), vs('T4', 'T2'), linear];
}

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];

describe('crossed one-stage Kenward–Roger vs pbkrtest', () => {
  for (const setting of [
    { seed: 71, sites: 12, years: 5, terms: ALL },
    { seed: 83, sites: 11, years: 4, terms: ['site', 'year', 'trial', 'block', 'treatment-by-site'] as CrossedTerm[] },
    { seed: 97, sites: 14, years: 3, terms: ['trial', 'block', 'treatment-by-year', 'treatment-by-trial'] as CrossedTerm[] },
    { seed: 59, sites: 10, years: 4, terms: ['site', 'trial', 'block', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: true },
  ]) {
    const yearAsFixed = 'yearAsFixed' in setting && setting.yearAsFixed === true;
    it(`matches on ${setting.sites} sites over ${setting.years} years (seed ${setting.seed}; ${setting.terms.join(', ')}${yearAsFixed ? '; years fixed' : ''})`, () => {
      const sim = simulateCrossed({ seed: setting.seed, sites: setting.sites, years: setting.years, runProbability: 0.7, missing: 0.06, sd: { site: 1.1, year: 0.8 } });
      const codes = sim.network.treatments.map((t) => t.code);
      const contrasts = contrastsFor(codes);
      const fit = fitCrossed(sim.network, contrasts, { random: setting.terms, yearAsFixed, df: 'kenward-roger', confidence: 0.95, lrt: false, profile: false });
      expect(fit.converged).toBe(true);
      expect(fit.warnings.filter((w) => /Kenward/.test(w))).toEqual([]);
      const theta = Object.fromEntries(setting.terms.map((t) => [R_GROUP[t], Math.sqrt(fit.variance[t]! / fit.variance.residual!)]));
      const rows = contrasts.map((c) => codes.map((t) => c.coefficients[t] / c.divisor));
      const r = runPbkrtestCrossed(sim.csv, codes, rows, setting.terms, theta, yearAsFixed);
      expect(relDiff(r.values.tremlcrit, fit.minusTwoLogLik)).toBeLessThan(1e-12);
      const ours = [...fit.contrasts.map((c) => ({ df: c.df!, se: c.se!, plain: c.seUnadjusted! })), ...fit.means.map((m) => ({ df: m.df!, se: m.se, plain: NaN }))];
      const worst = { dfOurs: 0, seOurs: 0, dfLmer: 0, seLmer: 0 };
      ours.forEach((o, k) => {
        const i = k + 1;
        worst.dfOurs = Math.max(worst.dfOurs, relDiff(o.df, r.values[`tdf${i}`]));
        worst.seOurs = Math.max(worst.seOurs, relDiff(o.se, r.values[`tse${i}`]));
        worst.dfLmer = Math.max(worst.dfLmer, relDiff(o.df, r.values[`kdf${i}`]));
        worst.seLmer = Math.max(worst.seLmer, relDiff(o.se, r.values[`kse${i}`]));
      });
      console.log(`seed ${setting.seed}: largest relative differences`, worst);
      ours.forEach((o, k) => {
        const i = k + 1;
        expect(relDiff(o.df, r.values[`tdf${i}`]), `df ${i} at our estimates`).toBeLessThan(1e-9);
        expect(relDiff(o.se, r.values[`tse${i}`]), `se ${i} at our estimates`).toBeLessThan(1e-10);
        expect(relDiff(o.df, r.values[`kdf${i}`]), `df ${i} at lmer's optimum`).toBeLessThan(1e-3);
        expect(relDiff(o.se, r.values[`kse${i}`]), `se ${i} at lmer's optimum`).toBeLessThan(1e-6);
        if (Number.isFinite(o.plain)) expect(o.se).toBeGreaterThanOrEqual(o.plain);
      });
      expect(fit.contrasts.every((c) => c.dfMethod === 'kenward-roger')).toBe(true);
    }, 300_000);
  }
});
