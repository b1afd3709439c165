// Economic optimum of the population-average quadratic b0 + b1 x + b2 x²: net return gain
// b1 x + b2 x² - r x is largest at x* = (r - b1) / (2 b2) when b2 < 0, held inside the tested
// range with the same flags as the per-trial curves. Delta method on the fixed effects:
// ∂x*/∂b1 = -1 / (2 b2), ∂x*/∂b2 = -x* / b2, so
//   var x* = gb² var b1 + 2 gb gc cov(b1, b2) + gc² var b2,
// with a normal-quantile interval (the fixed effects' covariance is treated as known).
import { normalQuantile } from '../../stats/distributions.js';
import { cappedOptimum, type Curve } from '../curves.js';
import { num } from '../../jsonSafe.js';
import type { MixedPopulationOptimum } from './types.js';

export interface QuadraticEstimate {
  readonly linear: number;
  readonly quadratic: number;
  readonly varLinear: number;
  readonly varQuadratic: number;
  readonly covLinearQuadratic: number;
}

export function populationOptimum(e: QuadraticEstimate, r: number, lo: number, hi: number, confidence: number): MixedPopulationOptimum {
  const curve: Curve = { model: 'quadratic', params: { intercept: 0, linear: e.linear, quadratic: e.quadratic } };
  const capped = cappedOptimum(curve, r, lo, hi);
  const x = capped.unconstrained;
  let se = NaN;
  if (e.quadratic < 0) {
    const gb = -1 / (2 * e.quadratic);
    const gc = -x / e.quadratic;
    se = Math.sqrt(gb * gb * e.varLinear + 2 * gb * gc * e.covLinearQuadratic + gc * gc * e.varQuadratic);
  }
  const z = normalQuantile(1 - (1 - confidence) / 2);
  const xo = capped.optimum;
  const gain = e.linear * xo + e.quadratic * xo * xo;
  const pct = Math.round(confidence * 1000) / 10;
  return {
    optimum: num(xo),
    unconstrainedOptimum: num(x),
    se: num(se),
    lower: num(x - z * se),
    upper: num(x + z * se),
    confidence,
    method: Number.isFinite(se)
      ? `delta method on the fixed effects' REML covariance, ${pct}% normal interval around the unconstrained optimum (not held to the tested range)`
      : 'no interval: the population curve is not concave (quadratic >= 0)',
    flags: capped.flags,
    range: [num(lo), num(hi)],
    yieldGainAtOptimum: num(gain),
    netReturnAtOptimum: num(gain - r * xo),
  };
}
