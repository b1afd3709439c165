// The moment start of the crossed AI-REML search (momentStart.ts): the search from it reaches the
// same optimum as from the old start (every ratio 1), on three networks — all seven terms, fixed
// years with six terms, and one whose treatment-by-year variance is simulated at zero and sits at
// the boundary — within 1e-8 relative in the criterion (about its rounding at these sizes) and
// 1e-4 relative (or 1e-5 absolute) in each theta, the tolerance the fit is compared to lme4 with
// in fitCrossed.test.ts; and the start lies near the REML estimates (each ratio within a factor
// of 2 where the estimate is not at zero: ANOVA-type moment estimates of a crossed layout are
// unbiased but noisier than REML, common practice for start values) so that the search takes
// no more Newton steps than from the old start.
import { describe, expect, it } from 'vitest';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { optimiseCrossed } from '../../../../src/engine/onestage/crossed/optimiseCrossed.js';
import { momentStart } from '../../../../src/engine/onestage/crossed/momentStart.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
const NETWORKS = [
  { name: 'all seven terms', seed: 101, sites: 40, years: 6, terms: ALL, yearAsFixed: false, sd: {} },
  { name: 'fixed years', seed: 202, sites: 30, years: 4, terms: ['site', 'trial', 'block', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: true, sd: {} },
  { name: 'treatment-by-year at zero', seed: 303, sites: 25, years: 5, terms: ALL, yearAsFixed: false, sd: { 'treatment-by-year': 0 } },
];

describe('moment start values for the crossed AI-REML search', () => {
  for (const net of NETWORKS)
    it(`reaches the optimum of the old start (${net.name})`, () => {
      const sim = simulateCrossed({ seed: net.seed, sites: net.sites, years: net.years, runProbability: 0.75, missing: 0.05, sd: net.sd });
      const d = crossedData(sim.network, net.terms, net.yearAsFixed);
      const L = crossedLayout(d, net.terms, net.yearAsFixed);
      const start = momentStart(d, L);
      expect(start.length).toBe(L.terms.length);
      const old = optimiseCrossed(d, L, L.terms.map(() => 1));
      const fromMoments = optimiseCrossed(d, L, start);
      expect(old.search).toBe('average-information');
      expect(fromMoments.search).toBe('average-information');
      const a = old.evaluation;
      const b = fromMoments.evaluation;
      expect(Math.abs(a.criterion - b.criterion)).toBeLessThan(1e-8 * Math.abs(a.criterion));
      L.terms.forEach((_, k) => expect(Math.abs(a.theta[k] - b.theta[k])).toBeLessThan(Math.max(1e-5, 1e-4 * a.theta[k])));
      expect(Math.abs(a.sigma2 - b.sigma2)).toBeLessThan(1e-4 * a.sigma2);
      L.terms.forEach((_, k) => {
        if (a.theta[k] > 0.1) expect(Math.abs(Math.log(start[k] ** 2 / a.theta[k] ** 2))).toBeLessThan(Math.log(2));
      });
      expect(fromMoments.iterations).toBeLessThanOrEqual(old.iterations);
      if (net.sd['treatment-by-year'] === 0) expect(b.theta[L.at['treatment-by-year']]).toBeLessThan(1e-3);
    });
});
