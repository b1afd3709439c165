// The new-site predictive distribution by parametric bootstrap over the confidence distribution
// of tau² (Nagashima, Noma & Furukawa 2019, Stat Methods Med Res 28:1689-1702), so that the
// prediction interval and the new-site probabilities carry the uncertainty in tau², which the
// plug-in interval mean ± t(k - 2) sqrt(SE² + tau²) ignores (it under-covers at moderate
// heterogeneity: see npm run sim:coverage).
//
// One draw b (the algorithm of the paper as its authors implement it; the tau² step uses the
// generalised-Q confidence distribution, see tau2ConfidenceDistribution.ts):
//   1. tau²_b from the confidence distribution of tau²;
//   2. the mean's draw: m(tau²_b) - t_b sqrt(V_HK(tau²_b)), with m the weighted mean at tau²_b,
//      V_HK = sum w (y - m)² / ((k - 1) sum w) the Hartung–Knapp variance and t_b ~ t(k - 1);
//   3. the new site's true effect: that draw + e_b sqrt(tau²_b), e_b ~ N(0, 1).
// The interval is the pair of sample quantiles of the B new-site draws (type 7: linear between
// order statistics). The probabilities average, over draws, the exact normal probability given
// steps 1-2 (a Rao–Blackwell step: same distribution, less Monte Carlo noise than counting).
// Deterministic given the seed (xoshiro128**).
import { normalUpperFast } from '../stats/normalTailTable.js';
import { xoshiro128 } from '../stats/xoshiro128.js';
import { tau2ConfidenceDistribution } from './tau2ConfidenceDistribution.js';

export const DEFAULT_PREDICTION_DRAWS = 20000;
export const DEFAULT_PREDICTION_SEED = 20190601;

/**
 * A mean estimated elsewhere (the one-stage model): its draw is estimate - t(df) x se x
 * sqrt(W(tau²ref) / W(tau²*)), W(tau²) = sum 1 / (v + tau²), so its spread follows the drawn
 * tau² as the weighted mean's variance 1 / W would; tau²ref is the tau² the se was estimated at.
 */
export interface ExternalMean {
  estimate: number;
  se: number;
  df: number;
  tau2: number;
}

export interface BootstrapPredictionOptions {
  confidence: number;
  threshold: number;
  draws?: number;
  seed?: number;
  signal?: AbortSignal;
  /** Called (fraction done) only once the work has taken more than a second. */
  onProgress?: (fraction: number) => void;
  /** Draw the mean around this estimate instead of the weighted mean (one-stage use). */
  externalMean?: ExternalMean;
}

export interface BootstrapPrediction {
  lower: number;
  upper: number;
  /** Median of the new-site draws. */
  median: number;
  probPositive: number;
  probAboveThreshold: number;
  draws: number;
  seed: number;
  /** Confidence mass of tau² at zero (share of draws with tau² = 0, in expectation). */
  tau2MassAtZero: number;
}

export function bootstrapPrediction(y: ArrayLike<number>, v: ArrayLike<number>, options: BootstrapPredictionOptions): BootstrapPrediction {
  const k = y.length;
  if (k < 3) throw new Error('bootstrapPrediction: needs at least 3 trials');
  const B = options.draws ?? DEFAULT_PREDICTION_DRAWS;
  const seed = options.seed ?? DEFAULT_PREDICTION_SEED;
  if (!Number.isInteger(B) || B < 100) throw new Error(`bootstrapPrediction: draws must be an integer >= 100 (got ${B})`);
  const started = Date.now();
  const cd = tau2ConfidenceDistribution(y, v, { signal: options.signal });
  const random = xoshiro128(seed);
  const draws = new Float64Array(B);
  const df = k - 1;
  const external = options.externalMean;
  let referenceW = 0;
  if (external) for (let i = 0; i < k; i++) referenceW += 1 / (v[i] + external.tau2);
  let probPositive = 0;
  let probAbove = 0;
  for (let b = 0; b < B; b++) {
    if ((b & 1023) === 0 && b > 0) {
      options.signal?.throwIfAborted();
      if (options.onProgress && Date.now() - started > 1000) options.onProgress(b / B);
    }
    const d = cd.at(random.normal());
    const centre = external
      ? external.estimate - random.studentT(external.df) * external.se * Math.sqrt(referenceW / d.sumW)
      : d.mean - random.studentT(df) * Math.sqrt(d.hkVariance);
    const tau = Math.sqrt(d.tau2);
    draws[b] = centre + tau * random.normal();
    probPositive += above(centre, tau, 0);
    probAbove += above(centre, tau, options.threshold);
  }
  const alpha = 1 - options.confidence;
  return {
    lower: quantile7(draws, alpha / 2),
    upper: quantile7(draws, 1 - alpha / 2),
    median: quantile7(draws, 0.5),
    probPositive: probPositive / B,
    probAboveThreshold: probAbove / B,
    draws: B,
    seed,
    tau2MassAtZero: cd.massAtZero,
  };
}

/** P(N(centre, tau²) > x); a point mass when tau = 0. */
function above(centre: number, tau: number, x: number): number {
  if (tau > 0) return normalUpperFast((x - centre) / tau);
  return centre > x ? 1 : 0;
}

/**
 * Sample quantile, type 7 (Hyndman & Fan 1996): linear between order statistics j and j + 1,
 * j = floor((n - 1) p). Found by selection (Hoare's quickselect, reordering `x` in place) rather
 * than a full sort: the order statistic j lands in place with nothing larger before it, so j + 1
 * is the smallest value after it.
 */
export function quantile7(x: Float64Array, p: number): number {
  const n = x.length;
  const h = (n - 1) * p;
  const j = Math.floor(h);
  const lower = select(x, j);
  if (j + 1 >= n || h === j) return lower;
  let next = Infinity;
  for (let i = j + 1; i < n; i++) if (x[i] < next) next = x[i];
  return lower + (h - j) * (next - lower);
}

function select(x: Float64Array, k: number): number {
  let left = 0;
  let right = x.length - 1;
  while (right > left) {
    // median of three as the pivot, then a Hoare partition
    const mid = (left + right) >> 1;
    const a = x[left];
    const b = x[mid];
    const c = x[right];
    const pivot = a < b ? (b < c ? b : a < c ? c : a) : a < c ? a : b < c ? c : b;
    let i = left;
    let j = right;
    while (i <= j) {
      while (x[i] < pivot) i++;
      while (x[j] > pivot) j--;
      if (i <= j) {
        const t = x[i];
        x[i] = x[j];
        x[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else return x[k];
  }
  return x[k];
}
