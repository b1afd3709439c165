// The three nonlinear curves share one form: fitted = offsets·β + b g(x; θ), linear in the
// offsets (intercept, blocks) and b, nonlinear in one parameter θ. This file holds g and
// ∂g/∂θ for each, and the polishing step run after the profile search: Levenberg–Marquardt
// on all parameters at once (β, b, θ) from the profile's solution, which confirms the
// minimum by the relative-offset criterion and gives the Jacobian for standard errors.
import { zeros, type Matrix } from '../linalg/matrix.js';
import { levenbergMarquardt, relativeOffset } from './levenbergMarquardt.js';
import type { TrialRateData } from './rateData.js';
import type { LinearFit } from './leastSquares.js';

export interface CurveShape {
  readonly g: (x: number, theta: number) => number;
  readonly dg: (x: number, theta: number) => number;
}

export const EXPONENTIAL_SHAPE: CurveShape = { g: (x, c) => -Math.expm1(-c * x), dg: (x, c) => x * Math.exp(-c * x) };
export const QUADRATIC_PLATEAU_SHAPE: CurveShape = {
  g: (x, x0) => {
    const m = Math.min(x, x0);
    return m - (m * m) / (2 * x0);
  },
  dg: (x, x0) => {
    const m = Math.min(x, x0);
    return (m * m) / (2 * x0 * x0);
  },
};
export const LINEAR_PLATEAU_SHAPE: CurveShape = { g: (x, x0) => Math.min(x, x0), dg: (x, x0) => (x > x0 ? 1 : 0) };

export interface PolishedFit {
  readonly offsetCoef: Float64Array;
  readonly b: number;
  readonly theta: number;
  readonly rss: number;
  /** Jacobian of the fitted values at the solution: kept offset columns, b, θ. */
  readonly jacobian: Matrix;
  readonly iterations: number;
  readonly relativeOffset: number;
  readonly lmConverged: boolean;
}

/**
 * LM tolerance on the relative offset: stricter than nls's default 1e-5, but not below
 * ~1e-7, where the sum of squares changes less than its rounding error.
 */
export const POLISH_TOLERANCE = 1e-6;

export function polishSeparable(d: TrialRateData, shape: CurveShape, profile: LinearFit, theta: number, runLm: boolean): PolishedFit {
  const n = d.y.length;
  const q = d.offsetCols;
  const kept: number[] = [];
  for (let j = 0; j < q; j++) if (!Number.isNaN(profile.coef[j])) kept.push(j);
  const k = kept.length;
  const evaluate = (p: Float64Array) => {
    const b = p[k];
    const th = p[k + 1];
    const residuals = new Float64Array(n);
    const jacobian = zeros(n, k + 2);
    for (let i = 0; i < n; i++) {
      let fit = 0;
      for (let j = 0; j < k; j++) {
        const v = d.offsets[i * q + kept[j]];
        fit += v * p[j];
        jacobian.data[i * (k + 2) + j] = v;
      }
      const g = shape.g(d.rate[i], th);
      fit += b * g;
      jacobian.data[i * (k + 2) + k] = g;
      jacobian.data[i * (k + 2) + k + 1] = b * shape.dg(d.rate[i], th);
      residuals[i] = d.y[i] - fit;
    }
    return { residuals, jacobian };
  };
  const start = new Float64Array(k + 2);
  kept.forEach((j, idx) => (start[idx] = profile.coef[j]));
  start[k] = profile.coef[profile.curveStart];
  start[k + 1] = theta;
  // Noise floor for the relative offset (as nls's scaleOffset): 1e-4 of the yield level, far
  // below any real residual spread, so only zero-residual (noise-free) fits are affected.
  const yScale = Math.sqrt(d.y.reduce((s, v) => s + v * v, 0) / n);
  const settings = { maxIterations: 200, tolerance: POLISH_TOLERANCE, scale: 1e-4 * yScale };
  let p: Float64Array = start;
  let iterations = 0;
  if (runLm) {
    const lm = levenbergMarquardt({ evaluate }, start, settings);
    // Keep the profile solution unless LM found a strictly smaller sum of squares.
    if (lm.rss < profile.rss) p = lm.params;
    iterations = lm.iterations;
  }
  const at = evaluate(p);
  const offset = relativeOffset(at.residuals, at.jacobian, settings.scale);
  const offsetCoef = new Float64Array(q).fill(NaN);
  kept.forEach((j, idx) => (offsetCoef[j] = p[idx]));
  return {
    offsetCoef,
    b: p[k],
    theta: p[k + 1],
    rss: at.residuals.reduce((s, v) => s + v * v, 0),
    jacobian: at.jacobian,
    iterations,
    relativeOffset: offset,
    lmConverged: runLm && offset < POLISH_TOLERANCE,
  };
}
