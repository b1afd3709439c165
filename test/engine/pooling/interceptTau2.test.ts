// The intercept-only ML/REML route (safeguarded Newton on the score) against the general
// route (Fisher scoring then Brent on the score), reached through a design whose single
// column is 2 instead of 1 (tau² does not depend on how the intercept column is scaled):
// the same root to 1e-10 relative (both stop at 1e-14; they round differently), the same
// boundary verdicts. The score's derivative against a central difference (1e-6 relative).
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { estimateTau2 } from '../../../src/engine/pooling/tau2Estimators.js';
import { interceptDesign } from '../../../src/engine/pooling/weightedFit.js';
import { interceptScore } from '../../../src/engine/pooling/interceptTau2.js';
import { zeros } from '../../../src/engine/linalg/matrix.js';
import { generatedSets } from './support/generatedSets.js';

const dataset = generatedSets({ maxK: 60, maxLogScale: 4, maxSpread: 20 });

function twos(k: number) {
  const x = zeros(k, 1);
  x.data.fill(2);
  return x;
}

describe('intercept-only tau² by Newton on the score', () => {
  it('equals the general route, boundary included (300 generated data sets, seed 7)', () => {
    let boundaries = 0;
    fc.assert(
      fc.property(dataset, ({ y, v }) => {
        for (const method of ['reml', 'ml'] as const) {
          const fast = estimateTau2(y, v, interceptDesign(y.length), method);
          const general = estimateTau2(y, v, twos(y.length), method);
          expect(fast.converged).toBe(true);
          expect(fast.atBoundary).toBe(general.atBoundary);
          if (general.tau2 === 0) {
            expect(fast.tau2).toBe(0);
            boundaries++;
          } else expect(Math.abs(fast.tau2 - general.tau2)).toBeLessThanOrEqual(1e-10 * general.tau2);
        }
      }),
      { numRuns: 300, seed: 7 },
    );
    expect(boundaries).toBeGreaterThan(10);
  });

  it('from a start far off either side (a warm start from another pool) it finds the same root', () => {
    const y = [0.3, 1.2, -0.4, 0.9, 2.1, 0.7, 1.5];
    const v = [0.04, 0.09, 0.05, 0.12, 0.08, 0.03, 0.1];
    const x = interceptDesign(y.length);
    const ref = estimateTau2(y, v, x, 'reml');
    expect(ref.tau2).toBeGreaterThan(0);
    for (const start of [0, 1e-9, ref.tau2 / 1000, ref.tau2 * 0.9, ref.tau2 * 1.1, ref.tau2 * 1000]) {
      expect(Math.abs(estimateTau2(y, v, x, 'reml', start).tau2 - ref.tau2)).toBeLessThanOrEqual(1e-12 * ref.tau2);
    }
  });

  it("the score's derivative matches a central difference of the score", () => {
    const y = [0.3, 1.2, -0.4, 0.9, 2.1, 0.7, 1.5];
    const v = [0.04, 0.09, 0.05, 0.12, 0.08, 0.03, 0.1];
    const at = new Float64Array(2);
    const up = new Float64Array(2);
    const down = new Float64Array(2);
    for (const reml of [true, false])
      for (const t of [0.005, 0.05, 0.4, 3]) {
        const h = 1e-5 * t;
        interceptScore(y, v, t, reml, at);
        interceptScore(y, v, t + h, reml, up);
        interceptScore(y, v, t - h, reml, down);
        const numeric = (up[0] - down[0]) / (2 * h);
        expect(Math.abs(at[1] - numeric)).toBeLessThanOrEqual(1e-6 * Math.abs(at[1]));
      }
  });
});
