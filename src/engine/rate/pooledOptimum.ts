// The pooled economic optimum: the rate maximising the mean net return over the trials'
// fitted curves, N(x) = mean_t [f_t(x) - f_t(0)] - r x, within the tested range. A fine grid
// finds the best region (the mean of plateau and exponential curves need not be smooth or
// concave), then bisection on the sign of the mean slope — or golden section when the
// slope does not change sign — refines it. The profitable range is the stretch of rates
// around the optimum whose mean net return is within `within` of the maximum.
import { yieldGain, type Curve } from './curves.js';
import { summedMeanCurve, type MeanCurve } from './meanCurve.js';
import { goldenSection } from './profileSearch.js';
import type { OptimumFlag } from './types.js';

export const POOLED_GRID_POINTS = 2001;

export interface PooledPoint {
  readonly optimum: number;
  readonly netReturn: number;
  readonly yieldGain: number;
  readonly profitableLower: number;
  readonly profitableUpper: number;
  readonly flags: OptimumFlag[];
}

export function meanYieldGain(curves: readonly Curve[], x: number): number {
  let s = 0;
  for (const c of curves) s += yieldGain(c, x);
  return s / curves.length;
}

/** The search grid over [lo, hi]. */
export function gridRates(lo: number, hi: number, gridPoints = POOLED_GRID_POINTS): Float64Array {
  const step = (hi - lo) / (gridPoints - 1);
  const xs = new Float64Array(gridPoints);
  for (let i = 0; i < gridPoints; i++) xs[i] = i === gridPoints - 1 ? hi : lo + step * i;
  return xs;
}

/** The optimum of the trials' mean curve (their coefficients summed where they can be: meanCurve.ts). */
export function pooledOptimum(curves: readonly Curve[], r: number, lo: number, hi: number, within: number): PooledPoint {
  return optimumOfMean(summedMeanCurve(curves), r, lo, hi, within);
}

export function optimumOfMean(mean: MeanCurve, r: number, lo: number, hi: number, within: number): PooledPoint {
  const net = (x: number) => mean.gain(x) - r * x;
  const slope = (x: number) => mean.slope(x) - r;
  const xs = gridRates(lo, hi);
  const gridPoints = xs.length;
  const ns = new Float64Array(gridPoints);
  let best = 0;
  for (let i = 0; i < gridPoints; i++) ns[i] = net(xs[i]);
  for (let i = 0; i < gridPoints; i++) if (ns[i] > ns[best]) best = i;
  const last = gridPoints - 1;
  const flags: OptimumFlag[] = [];
  let x: number;
  const leftOfHi = hi - 1e-9 * (hi - lo);
  if (hi <= lo) x = lo;
  else if (best === 0 && slope(lo) <= 0) x = lo;
  else if (best === last && slope(leftOfHi) >= 0) x = hi;
  else {
    const a = xs[Math.max(0, best - 1)];
    const b = xs[Math.min(last, best + 1)];
    x = refineMaximum(net, slope, a, b);
    if (net(x) < ns[best]) x = xs[best];
  }
  if (hi > lo && x === hi && slope(leftOfHi) > 0) flags.push('above-tested-range');
  if (x === lo) flags.push(lo <= 0 ? 'no-input-pays' : 'below-tested-range');
  const nMax = net(x);
  const range = profitableRange(net, xs, ns, x, nMax - Math.max(0, within), within > 0);
  return { optimum: x, netReturn: nMax, yieldGain: mean.gain(x), profitableLower: range[0], profitableUpper: range[1], flags };
}

function refineMaximum(net: (x: number) => number, slope: (x: number) => number, a: number, b: number): number {
  if (slope(a) > 0 && slope(b) < 0) {
    let lo = a;
    let hi = b;
    for (let it = 0; it < 200; it++) {
      const mid = 0.5 * (lo + hi);
      if (mid <= lo || mid >= hi) break;
      if (slope(mid) > 0) lo = mid;
      else hi = mid;
    }
    return 0.5 * (lo + hi);
  }
  return goldenSection((t) => -net(t), a, b);
}

/** The contiguous interval around x where net >= threshold, ends found by bisection. */
function profitableRange(net: (x: number) => number, xs: Float64Array, ns: Float64Array, x: number, threshold: number, active: boolean): [number, number] {
  if (!active) return [x, x];
  const last = xs.length - 1;
  let lower = xs[0];
  for (let j = last; j >= 0; j--) {
    if (xs[j] < x && ns[j] < threshold) {
      lower = crossing(net, threshold, xs[j], Math.min(j < last ? xs[j + 1] : x, x));
      break;
    }
  }
  let upper = xs[last];
  for (let j = 0; j <= last; j++) {
    if (xs[j] > x && ns[j] < threshold) {
      upper = crossing(net, threshold, Math.max(j > 0 ? xs[j - 1] : x, x), xs[j]);
      break;
    }
  }
  return [lower, upper];
}

/** Point in [a, b] where net crosses the threshold (net(a) and net(b) on opposite sides). */
function crossing(net: (x: number) => number, threshold: number, a: number, b: number): number {
  const aBelow = net(a) < threshold;
  let lo = a;
  let hi = b;
  for (let it = 0; it < 200; it++) {
    const mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (net(mid) < threshold === aBelow) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}
