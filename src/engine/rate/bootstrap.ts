// Bootstrap of the pooled optimum over trials: each replicate draws k trials with
// replacement (whole trials, so between-site variation is what is resampled) and
// re-maximises the mean net return of their fitted curves. Percentile limits.
// Draws: index = floor(u * k) with u from mulberry32(seed), k per replicate, in order.
// A replicate's mean curve is the curves weighted by how often each was drawn: the same mean
// as listing the drawn curves, with quadratic and linear coefficients summed (meanCurve.ts), so
// a replicate costs O(k) for its draws and not O(k) per rate of the search grid.
import { mulberry32 } from '../stats/random.js';
import type { Curve } from './curves.js';
import { summedMeanCurve } from './meanCurve.js';
import { optimumOfMean } from './pooledOptimum.js';
import { quantileType7 } from './quantile.js';

export interface BootstrapOutcome {
  readonly optima: number[];
  readonly lower: number;
  readonly upper: number;
  readonly se: number;
}

export function bootstrapOptimum(
  curves: readonly Curve[],
  ranges: readonly [number, number][],
  r: number,
  replicates: number,
  seed: number,
  confidence: number,
  onProgress?: (fraction: number) => void,
  signal?: AbortSignal,
): BootstrapOutcome {
  const k = curves.length;
  const u = mulberry32(seed);
  const optima: number[] = [];
  const every = Math.max(1, Math.floor(replicates / 100));
  const counts = new Float64Array(k);
  // The ranges' ends in flat arrays: the draw loop runs k times per replicate.
  const lows = Float64Array.from(ranges, (r) => r[0]);
  const highs = Float64Array.from(ranges, (r) => r[1]);
  for (let rep = 0; rep < replicates; rep++) {
    signal?.throwIfAborted();
    counts.fill(0);
    let lo = -Infinity;
    let hi = Infinity;
    for (let i = 0; i < k; i++) {
      const j = Math.min(k - 1, Math.floor(u() * k));
      counts[j] += 1;
      lo = Math.max(lo, lows[j]);
      hi = Math.min(hi, highs[j]);
    }
    optima.push(optimumOfMean(summedMeanCurve(curves, counts), r, lo, hi, 0).optimum);
    if (onProgress && ((rep + 1) % every === 0 || rep + 1 === replicates)) onProgress((rep + 1) / replicates);
  }
  const alpha = 1 - confidence;
  const mean = optima.reduce((s, v) => s + v, 0) / optima.length;
  const se = Math.sqrt(optima.reduce((s, v) => s + (v - mean) ** 2, 0) / Math.max(1, optima.length - 1));
  return { optima, lower: quantileType7(optima, alpha / 2), upper: quantileType7(optima, 1 - alpha / 2), se };
}
