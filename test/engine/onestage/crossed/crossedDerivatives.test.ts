// The analytic derivatives of the crossed model's profiled REML criterion against finite
// differences of the criterion itself (common practice: a derivative checked by differencing the
// function it differentiates), and the AI-REML search against the derivative-free simplex.
// Tolerances: gradient 1e-6 relative to its largest entry (central differences, step 1e-5 in the
// variance ratios) at interior points, both routes to the shared traces (ratios above and below
// DIRECT_BELOW); 1e-4 by a one-sided difference at a ratio of exactly zero; the AI matrix through
// its defining identity y'P H_k P H_l P y = -1/2 d(y'P H_k P y)/d gamma_l, 1e-5 relative.
// The external check of the optimum is fitCrossed.test.ts (lme4, lmerTest), unchanged.
import { describe, expect, it } from 'vitest';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout, type CrossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { evaluateCrossed } from '../../../../src/engine/onestage/crossed/crossedLikelihood.js';
import { crossedDerivatives, DIRECT_BELOW } from '../../../../src/engine/onestage/crossed/crossedDerivatives.js';
import { optimiseCrossed, simplexSearch } from '../../../../src/engine/onestage/crossed/optimiseCrossed.js';
import type { CrossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
const SETTINGS = [
  { seed: 11, sites: 14, years: 5, terms: ALL, yearAsFixed: false },
  { seed: 23, sites: 10, years: 4, terms: ['site', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: true },
  { seed: 37, sites: 16, years: 3, terms: ['year', 'trial', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: false },
];

function setup(s: (typeof SETTINGS)[number]): { d: CrossedData; L: CrossedLayout } {
  const sim = simulateCrossed({ seed: s.seed, sites: s.sites, years: s.years, runProbability: 0.7, missing: 0.06, sd: { site: 1.2, year: 0.8 } });
  const d = crossedData(sim.network, s.terms, s.yearAsFixed);
  return { d, L: crossedLayout(d, s.terms, s.yearAsFixed) };
}

const criterion = (d: CrossedData, L: CrossedLayout, gamma: readonly number[]) => evaluateCrossed(d, L, gamma.map(Math.sqrt))!.criterion;

describe('crossed REML derivatives', () => {
  for (const s of SETTINGS) {
    const { d, L } = setup(s);
    const nT = L.terms.length;
    // interior ratios above the direct-route threshold, and the same with every other one below it
    const points = [L.terms.map((_, k) => 0.2 + 0.15 * k), L.terms.map((_, k) => (k % 2 === 0 ? DIRECT_BELOW / 7 : 0.4 + 0.1 * k))];
    it(`gradient equals central differences of the criterion (${s.terms.join(', ')})`, () => {
      for (const gamma of points) {
        const der = crossedDerivatives(d, L, evaluateCrossed(d, L, gamma.map(Math.sqrt))!);
        const h = 1e-5;
        const fd = gamma.map((_, k) => {
          const up = [...gamma];
          const down = [...gamma];
          up[k] += h;
          down[k] -= h;
          return (criterion(d, L, up) - criterion(d, L, down)) / (2 * h);
        });
        const scale = Math.max(...fd.map(Math.abs));
        fd.forEach((v, k) => expect(Math.abs(der.gradient[k] - v) / scale, `${L.terms[k]} at ${gamma[k]}`).toBeLessThan(1e-6));
      }
    });
    it(`gradient at a ratio of exactly zero equals the one-sided difference (${s.terms.join(', ')})`, () => {
      const gamma = L.terms.map((_, k) => (k === 0 ? 0 : 0.3 + 0.1 * k));
      const der = crossedDerivatives(d, L, evaluateCrossed(d, L, gamma.map(Math.sqrt))!);
      const h = 1e-7;
      const up = [...gamma];
      up[0] = h;
      const fd = (criterion(d, L, up) - criterion(d, L, gamma)) / h;
      expect(Math.abs(der.gradient[0] - fd) / Math.max(1, Math.abs(fd))).toBeLessThan(1e-4);
    });
    it(`average information satisfies its defining identity (${s.terms.join(', ')})`, () => {
      const gamma = points[0];
      const ev = evaluateCrossed(d, L, gamma.map(Math.sqrt))!;
      const der = crossedDerivatives(d, L, ev);
      const h = 1e-6;
      for (let l = 0; l < nT; l++) {
        const up = [...gamma];
        const down = [...gamma];
        up[l] += h;
        down[l] -= h;
        const qUp = crossedDerivatives(d, L, evaluateCrossed(d, L, up.map(Math.sqrt))!, false).quadratic;
        const qDown = crossedDerivatives(d, L, evaluateCrossed(d, L, down.map(Math.sqrt))!, false).quadratic;
        for (let k = 0; k < nT; k++) {
          const ref = (-0.5 * (qUp[k] - qDown[k])) / (2 * h);
          const mine = der.information[k * nT + l] * ev.sigma2 + (der.quadratic[k] * der.quadratic[l]) / ev.rHr;
          expect(Math.abs(mine - ref) / Math.max(1e-8, Math.abs(ref)), `${L.terms[k]} x ${L.terms[l]}`).toBeLessThan(1e-5);
        }
      }
    });
    it(`AI-REML reaches the simplex's optimum in few evaluations (${s.terms.join(', ')})`, () => {
      const start = L.terms.map(() => 1);
      const ai = optimiseCrossed(d, L, start);
      const nm = simplexSearch(d, L, start, [], {});
      expect(ai.search).toBe('average-information');
      expect(ai.evaluations).toBeLessThan(60);
      // never worse than the simplex, and the same optimum (variance ratios to 1e-4)
      expect(ai.evaluation.criterion).toBeLessThanOrEqual(nm.evaluation.criterion + 1e-8);
      for (let k = 0; k < nT; k++) expect(Math.abs(ai.evaluation.theta[k] ** 2 - nm.evaluation.theta[k] ** 2), L.terms[k]).toBeLessThan(1e-4 * Math.max(1, nm.evaluation.theta[k] ** 2));
    }, 120_000);
  }
});
