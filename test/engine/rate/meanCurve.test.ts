// The pooled optimum and its bootstrap on the summed mean curve (src/engine/rate/meanCurve.ts:
// quadratic and linear coefficients summed, a replicate weighted by how often each trial was
// drawn) against the plain computation: every curve evaluated at every rate, a replicate as the
// list of its drawn curves. Random curves (fixed seed). The two differ by rounding only, so the
// optima agree to 1e-9 (absolute, on rates up to 200: bisection to machine precision on mean
// slopes that differ in their last bits) and net returns to 1e-12 relative.
import { describe, expect, it } from 'vitest';
import type { Curve } from '../../../src/engine/rate/curves.js';
import { plainMeanCurve, summedMeanCurve } from '../../../src/engine/rate/meanCurve.js';
import { optimumOfMean } from '../../../src/engine/rate/pooledOptimum.js';
import { bootstrapOptimum } from '../../../src/engine/rate/bootstrap.js';
import { quantileType7 } from '../../../src/engine/rate/quantile.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';

function randomCurves(n: number, seed: number, mixed: boolean): Curve[] {
  const u = mulberry32(seed);
  return Array.from({ length: n }, (_, i): Curve => {
    const kind = mixed ? i % 5 : i % 7 === 0 ? 1 : 0;
    const a = 5 + 2 * u();
    switch (kind) {
      case 0:
        return { model: 'quadratic', params: { intercept: a, linear: 0.01 + 0.04 * u(), quadratic: -(2e-5 + 1.5e-4 * u()) } };
      case 1:
        return { model: 'linear', params: { intercept: a, slope: 0.02 * u() - 0.005 } };
      case 2:
        return { model: 'linear-plateau', params: { intercept: a, slope: 0.01 + 0.03 * u(), join: 60 + 120 * u() } };
      case 3:
        return { model: 'quadratic-plateau', params: { intercept: a, linear: 0.02 + 0.04 * u(), join: 80 + 100 * u() } };
      default:
        return { model: 'exponential', params: { intercept: a, rise: 1 + 3 * u(), curvature: 0.005 + 0.03 * u() } };
    }
  });
}

/** The bootstrap as the list of drawn curves, each evaluated at every rate. */
function plainBootstrap(curves: readonly Curve[], ranges: readonly [number, number][], r: number, replicates: number, seed: number): number[] {
  const u = mulberry32(seed);
  const k = curves.length;
  const optima: number[] = [];
  for (let rep = 0; rep < replicates; rep++) {
    const sample: Curve[] = [];
    let lo = -Infinity;
    let hi = Infinity;
    for (let i = 0; i < k; i++) {
      const j = Math.min(k - 1, Math.floor(u() * k));
      sample.push(curves[j]);
      lo = Math.max(lo, ranges[j][0]);
      hi = Math.min(hi, ranges[j][1]);
    }
    optima.push(optimumOfMean(plainMeanCurve(sample), r, lo, hi, 0).optimum);
  }
  return optima;
}

describe('summed mean curve against the plain one', () => {
  for (const mixed of [false, true]) {
    const curves = randomCurves(300, mixed ? 9 : 8, mixed);
    it(`pooled optimum, net return, profitable range (${mixed ? 'five curve models' : 'quadratic and linear'}, 300 trials, six price ratios)`, () => {
      for (const r of [0.001, 0.004, 0.008, 0.012, 0.02, 0.04]) {
        const fast = optimumOfMean(summedMeanCurve(curves), r, 0, 200, 0.1);
        const plain = optimumOfMean(plainMeanCurve(curves), r, 0, 200, 0.1);
        expect(Math.abs(fast.optimum - plain.optimum)).toBeLessThan(1e-9);
        expect(Math.abs(fast.netReturn - plain.netReturn)).toBeLessThan(1e-12 * Math.max(1, Math.abs(plain.netReturn)));
        expect(Math.abs(fast.profitableLower - plain.profitableLower)).toBeLessThan(1e-9);
        expect(Math.abs(fast.profitableUpper - plain.profitableUpper)).toBeLessThan(1e-9);
        expect(fast.flags).toEqual(plain.flags);
      }
    });

    it(`bootstrap by draw counts equals the bootstrap of listed draws (${mixed ? 'five curve models' : 'quadratic and linear'}, some trials with a narrower range)`, () => {
      const ranges = curves.map((_, i): [number, number] => (i % 97 === 0 ? [0, 160] : [0, 200]));
      const seed = 12;
      const plain = plainBootstrap(curves, ranges, 0.008, 20, seed);
      const fast = bootstrapOptimum(curves, ranges, 0.008, 20, seed, 0.9);
      expect(fast.optima).toHaveLength(plain.length);
      fast.optima.forEach((x, i) => expect(Math.abs(x - plain[i])).toBeLessThan(1e-9));
      expect(Math.abs(fast.lower - quantileType7(plain, 0.05))).toBeLessThan(1e-9);
      expect(Math.abs(fast.upper - quantileType7(plain, 0.95))).toBeLessThan(1e-9);
    });
  }
});
