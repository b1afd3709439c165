// Bootstrap of the pooled optimum over trials: each replicate draws k trials with
// replacement (whole trials, so between-site variation is what is resampled) and
// re-maximises the mean net return of their fitted curves. Percentile limits.
// Draws: index = floor(u * k) with u from mulberry32(seed), k per replicate, in order.
import { mulberry32 } from '../stats/random.js';
import type { Curve } from './curves.js';
import { gridGains, gridRates, pooledOptimum } from './pooledOptimum.js';
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
  // Gains on the full-data grid, reused by every replicate whose range is the same.
  const lo0 = Math.max(...ranges.map((q) => q[0]));
  const hi0 = Math.min(...ranges.map((q) => q[1]));
  const cache = gridGains(curves, gridRates(lo0, hi0));
  for (let rep = 0; rep < replicates; rep++) {
    signal?.throwIfAborted();
    const sample: Curve[] = [];
    const gains: Float64Array[] = [];
    let lo = -Infinity;
    let hi = Infinity;
    for (let i = 0; i < k; i++) {
      const j = Math.min(k - 1, Math.floor(u() * k));
      sample.push(curves[j]);
      gains.push(cache[j]);
      lo = Math.max(lo, ranges[j][0]);
      hi = Math.min(hi, ranges[j][1]);
    }
    optima.push(pooledOptimum(sample, r, lo, hi, 0, lo === lo0 && hi === hi0 ? gains : undefined).optimum);
    if (onProgress && ((rep + 1) % every === 0 || rep + 1 === replicates)) onProgress((rep + 1) / replicates);
  }
  const alpha = 1 - confidence;
  const mean = optima.reduce((s, v) => s + v, 0) / optima.length;
  const se = Math.sqrt(optima.reduce((s, v) => s + (v - mean) ** 2, 0) / Math.max(1, optima.length - 1));
  return { optima, lower: quantileType7(optima, alpha / 2), upper: quantileType7(optima, 1 - alpha / 2), se };
}
