// A profile point by Newton steps (profileNewton.ts) against the derivative-free route it replaces:
// the -2 REML log-likelihood minimised with one variance held, by the Nelder–Mead simplex from the
// fit's optimum (common practice: a minimum checked by an independent search). Newton's value may
// not exceed the simplex's by more than 1e-7, and the simplex started at Newton's point finds
// nothing lower than 1e-7 below it. Points: each variance at half and twice its estimate.
// The intervals themselves are checked in recovery.test.ts (the demo network's stated year variance).
import { describe, expect, it } from 'vitest';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { optimiseCrossed } from '../../../../src/engine/onestage/crossed/optimiseCrossed.js';
import { profileNewton } from '../../../../src/engine/onestage/crossed/profileNewton.js';
import { AT_ZERO, profileCriterion } from '../../../../src/engine/onestage/crossed/crossedInference.js';
import { nelderMead } from '../../../../src/engine/rate/mixed/nelderMead.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];

describe('profile point by Newton steps', () => {
  const sim = simulateCrossed({ seed: 11, sites: 14, years: 5, runProbability: 0.7, missing: 0.06, sd: { site: 1.2, year: 0.8 } });
  const d = crossedData(sim.network, ALL, false);
  const L = crossedLayout(d, ALL, false);
  const ev = optimiseCrossed(d, L, L.terms.map(() => 1)).evaluation;
  for (const term of ['site', 'trial', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[]) {
    it(`${term} held at half and twice its estimate`, () => {
      const k = L.terms.indexOf(term);
      const vHat = ev.sigma2 * ev.theta[k] ** 2;
      const others = L.terms.map((_, j) => j).filter((j) => j !== k);
      for (const v of [vHat / 2, vHat * 2]) {
        const f = profileCriterion(d, L, k, v);
        const nt = profileNewton(d, L, k, v, ev.sigma2, ev.theta, AT_ZERO);
        expect(nt, `${term} at ${v}`).not.toBeNull();
        const fromOptimum = nelderMead(f, [Math.log(ev.sigma2), ...others.map((j) => ev.theta[j])], { step: 0.05, fTolerance: 1e-12, xTolerance: 1e-8, maxEvaluations: 6000 });
        expect(nt!.value - fromOptimum.value, `${term} at ${v}: Newton above the simplex`).toBeLessThan(1e-7);
        const fromNewton = nelderMead(f, [Math.log(nt!.sigma2), ...others.map((j) => nt!.theta[j])], { step: 0.01, fTolerance: 1e-13, xTolerance: 1e-9, maxEvaluations: 6000 });
        expect(nt!.value - fromNewton.value, `${term} at ${v}: lower point next to Newton's`).toBeLessThan(1e-7);
        expect(Math.abs(nt!.value - f(Float64Array.from([Math.log(nt!.sigma2), ...others.map((j) => nt!.theta[j])])))).toBeLessThan(1e-9);
      }
    }, 120_000);
  }
});
