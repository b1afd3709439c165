// The new-site (new-site-in-a-new-year) prediction of the multilevel pools by a parametric
// bootstrap of the studentised prediction error (the pivot), so that the interval and the
// probabilities carry the uncertainty in every tau² and in the mean, which the plug-in interval
// mu ± t(sites - 2) sqrt(SE² + sum of tau²) ignores. The construction is the bootstrap-calibrated
// predictive distribution of Lawless & Fredette (2005, Biometrika 92:529-542; cited from memory):
//   1. fit the model: mu, its variance, the tau² (fixed at their estimates for the simulation);
//   2. draw B data sets from the fitted model (new site, year and trial effects, and the trials'
//      sampling errors with their own known variances) and, with each, a new site's true effect;
//   3. refit each data set and studentise: q_b = (new effect_b - mu_b) / sqrt(var(mu_b) + tau²_b);
//   4. the predictive distribution is mu + sqrt(var(mu) + tau²) q with q from those B pivots: the
//      interval is its pair of quantiles (type 7), P(effect > x) the share of pivots above
//      (x - mu) / sqrt(var(mu) + tau²).
// Deterministic given the seed.
import { mulberry32, normalSampler } from '../../stats/random.js';

export const DEFAULT_PIVOT_DRAWS = 1000;

/** What a refit gives: the mean, its variance and the total between-trial variance of true effects a new site-year carries. */
export interface PivotFit {
  mu: number;
  muVariance: number;
  between: number;
}

export interface PivotModel {
  /** Fill the bootstrap estimates (one array per site) from the fitted model; return the new site's true effect. */
  simulate(normal: () => number, y: Float64Array[]): number;
  /** Refit on those estimates; null when the fit fails (counted, then left out). */
  refit(y: Float64Array[]): PivotFit | null;
}

export interface PivotOptions {
  confidence: number;
  /** Thresholds for P(new site's true effect > threshold). */
  thresholds: readonly number[];
  draws?: number;
  seed?: number;
  signal?: AbortSignal;
}

export interface PivotPrediction {
  lower: number;
  upper: number;
  /** P(new effect > threshold) per threshold, in the order given. */
  probAbove: number[];
  draws: number;
  seed: number;
  /** Refits that failed and were left out. */
  failed: number;
}

/** Sample quantile, type 7 (linear between order statistics), of sorted values. */
export function quantileSorted(sorted: Float64Array, p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function bootstrapPivotPrediction(model: PivotModel, fitted: PivotFit, sizes: readonly number[], options: PivotOptions): PivotPrediction {
  const draws = options.draws ?? DEFAULT_PIVOT_DRAWS;
  const seed = options.seed ?? 1;
  const normal = normalSampler(mulberry32(seed));
  const y = sizes.map((n) => new Float64Array(n));
  const pivots = new Float64Array(draws);
  let kept = 0;
  let failed = 0;
  for (let b = 0; b < draws; b++) {
    if (options.signal?.aborted) throw options.signal.reason ?? new Error('cancelled');
    const newEffect = model.simulate(normal, y);
    const f = model.refit(y);
    const sd = f === null ? NaN : Math.sqrt(f.muVariance + f.between);
    if (f === null || !(sd > 0) || !Number.isFinite(f.mu)) {
      failed++;
      continue;
    }
    pivots[kept++] = (newEffect - f.mu) / sd;
  }
  if (kept < 2) throw new Error(`the bootstrap prediction failed: ${failed} of ${draws} refits did not converge`);
  const sorted = pivots.subarray(0, kept).sort();
  const scale = Math.sqrt(fitted.muVariance + fitted.between);
  const alpha = 1 - options.confidence;
  const probAbove = options.thresholds.map((x) => {
    const cut = (x - fitted.mu) / scale;
    let above = 0;
    for (let i = 0; i < kept; i++) if (sorted[i] > cut) above++;
    return above / kept;
  });
  return {
    lower: fitted.mu + scale * quantileSorted(sorted, alpha / 2),
    upper: fitted.mu + scale * quantileSorted(sorted, 1 - alpha / 2),
    probAbove,
    draws: kept,
    seed,
    failed,
  };
}
