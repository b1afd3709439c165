// Levenberg–Marquardt (Marquardt 1963, scaled damping) for a least-squares problem with
// an analytic Jacobian of the fitted values. Convergence is judged by the Bates–Watts
// relative-offset criterion (the one R's nls uses): the part of the residual vector lying
// in the tangent plane, relative to the part orthogonal to it.
import { crossprod, tMatVec, zeros, type Matrix } from '../linalg/matrix.js';
import { cholesky, cholSolve, NotPositiveDefiniteError } from '../linalg/cholesky.js';
import { qrFactor, qtMultiply } from '../linalg/qr.js';

export interface LeastSquaresProblem {
  /** Residuals y - f(p) and the Jacobian of f (n x p) at p. */
  readonly evaluate: (p: Float64Array) => { residuals: Float64Array; jacobian: Matrix };
}

export interface LmOutcome {
  readonly params: Float64Array;
  readonly rss: number;
  readonly iterations: number;
  readonly relativeOffset: number;
  readonly converged: boolean;
}

export interface LmSettings {
  readonly maxIterations: number;
  /** Relative-offset tolerance for convergence. */
  readonly tolerance: number;
  /** Added to the relative offset's denominator (see relativeOffset). */
  readonly scale: number;
}

export const LM_DEFAULTS: LmSettings = { maxIterations: 200, tolerance: 1e-8, scale: 0 };

/**
 * Relative offset; `scale` is added to the denominator as R's nls scaleOffset does, so that
 * a zero-residual fit (noise-free data) can still be judged converged.
 */
export function relativeOffset(residuals: Float64Array, jacobian: Matrix, scale = 0): number {
  const n = jacobian.rows;
  const f = qrFactor(jacobian);
  const p = f.rank;
  if (n <= p) return NaN;
  const qtr = qtMultiply(f, residuals);
  let inPlane = 0;
  let out = 0;
  for (let i = 0; i < n; i++) (i < p ? (inPlane += qtr[i] ** 2) : (out += qtr[i] ** 2));
  const denominator = Math.sqrt(scale * scale + out / (n - p));
  if (denominator === 0) return inPlane === 0 ? 0 : Infinity;
  return Math.sqrt(inPlane / p) / denominator;
}

const sumSq = (r: Float64Array) => r.reduce((s, v) => s + v * v, 0);

export function levenbergMarquardt(problem: LeastSquaresProblem, start: Float64Array, settings: LmSettings = LM_DEFAULTS): LmOutcome {
  let p = Float64Array.from(start);
  let cur = problem.evaluate(p);
  let rss = sumSq(cur.residuals);
  let lambda = 1e-3;
  let iterations = 0;
  let offset = relativeOffset(cur.residuals, cur.jacobian, settings.scale);
  while (iterations < settings.maxIterations && !(offset < settings.tolerance)) {
    iterations++;
    const jtj = crossprod(cur.jacobian);
    const jtr = tMatVec(cur.jacobian, cur.residuals);
    let improved = false;
    for (let tries = 0; tries < 30 && !improved; tries++) {
      const damped = zeros(jtj.rows, jtj.cols);
      damped.data.set(jtj.data);
      for (let i = 0; i < jtj.rows; i++) damped.data[i * jtj.cols + i] *= 1 + lambda;
      let step: Float64Array;
      try {
        step = cholSolve(cholesky(damped), jtr);
      } catch (e) {
        if (!(e instanceof NotPositiveDefiniteError)) throw e;
        lambda *= 10;
        continue;
      }
      const trial = p.map((v, i) => v + step[i]);
      const next = problem.evaluate(trial);
      const nextRss = sumSq(next.residuals);
      if (Number.isFinite(nextRss) && nextRss <= rss) {
        p = trial;
        cur = next;
        rss = nextRss;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
      } else lambda *= 10;
    }
    offset = relativeOffset(cur.residuals, cur.jacobian, settings.scale);
    if (!improved) break;
  }
  return { params: p, rss, iterations, relativeOffset: offset, converged: offset < settings.tolerance };
}
