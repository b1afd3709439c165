// Robustness of the tau² solvers over wide ranges of scale and spread (fast-check, seeded).
// The likelihood itself is checked against R in rCrossCheck.test.ts; here the property is
// that REML/ML always converge and land on a maximum: no neighbour (±0.1%) and not the zero
// boundary has a higher (restricted) log-likelihood, and PM solves its equation.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { estimateTau2, logLikTau2 } from '../../../src/engine/pooling/tau2Estimators.js';
import { interceptDesign, weightedFit } from '../../../src/engine/pooling/weightedFit.js';
import { generatedSets } from './support/generatedSets.js';

const dataset = generatedSets({ maxK: 40, maxLogScale: 6, maxSpread: 50 });

describe('tau² solvers', () => {
  it('REML and ML converge to a maximum on every generated data set (300 runs, seed 42)', () => {
    fc.assert(
      fc.property(dataset, ({ y, v }) => {
        const x = interceptDesign(y.length);
        for (const reml of [true, false]) {
          const est = estimateTau2(y, v, x, reml ? 'reml' : 'ml');
          expect(est.converged).toBe(true);
          expect(est.tau2).toBeGreaterThanOrEqual(0);
          const ll = (t: number) => logLikTau2(v, weightedFit(y, v, x, t), reml);
          const best = ll(est.tau2);
          const tol = 1e-9 * Math.abs(best) + 1e-9;
          expect(ll(0)).toBeLessThanOrEqual(best + tol);
          if (est.tau2 > 0) {
            expect(ll(est.tau2 * 1.001)).toBeLessThanOrEqual(best + tol);
            expect(ll(est.tau2 * 0.999)).toBeLessThanOrEqual(best + tol);
          }
        }
      }),
      { numRuns: 300, seed: 42 },
    );
  });

  it('Paule–Mandel makes the generalised Q equal k - 1 whenever tau² > 0 (relative 1e-9)', () => {
    fc.assert(
      fc.property(dataset, ({ y, v }) => {
        const x = interceptDesign(y.length);
        const est = estimateTau2(y, v, x, 'pm');
        const q = weightedFit(y, v, x, est.tau2).weightedRss;
        if (est.tau2 > 0) expect(Math.abs(q - (y.length - 1)) / (y.length - 1)).toBeLessThan(1e-9);
        else expect(q).toBeLessThanOrEqual(y.length - 1 + 1e-12);
      }),
      { numRuns: 300, seed: 43 },
    );
  });
});
