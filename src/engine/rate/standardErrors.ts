// Asymptotic standard errors of curve parameters: s² (J'J)^{-1} with J the Jacobian of the
// fitted values at the least-squares solution and s² = RSS / (n - p), as R's summary() gives
// for lm and nls; derived parameters (plateau, asymptote, quadratic term of the
// quadratic-plateau) by the delta method.
import { crossprod, type Matrix } from '../linalg/matrix.js';
import { cholesky, cholInverse, NotPositiveDefiniteError } from '../linalg/cholesky.js';
import { SameMatrixMemo } from './sameMatrixMemo.js';

/** (J'J)^-1 of the Jacobian before (null: singular); trials laid out alike share it. */
const unscaledInverses = new SameMatrixMemo<Matrix | null>();

/** Covariance of all Jacobian columns, or null when J'J is singular or no df remain. */
export function jacobianCovariance(jacobian: Matrix, rss: number): Matrix | null {
  const n = jacobian.rows;
  const p = jacobian.cols;
  if (n <= p) return null;
  const unscaled = unscaledInverses.get(jacobian, unscaledInverse);
  if (unscaled === null) return null;
  const inv = { ...unscaled, data: unscaled.data.slice() };
  const s2 = rss / (n - p);
  for (let i = 0; i < inv.data.length; i++) inv.data[i] *= s2;
  return inv;
}

function unscaledInverse(j: Matrix): Matrix | null {
  try {
    return cholInverse(cholesky(crossprod(j)));
  } catch (e) {
    if (e instanceof NotPositiveDefiniteError) return null;
    throw e;
  }
}

/** Standard error of a linear combination g'θ of the parameters at indices idx. */
export function combinationSe(cov: Matrix, idx: readonly number[], g: readonly number[]): number {
  let v = 0;
  for (let a = 0; a < idx.length; a++) for (let b = 0; b < idx.length; b++) v += g[a] * g[b] * cov.data[idx[a] * cov.cols + idx[b]];
  return Math.sqrt(Math.max(0, v));
}

/**
 * Standard errors for a separable curve whose Jacobian columns end in (b, θ) after the
 * offsets (intercept first): `parameters` maps each name to its gradient over (a, b, θ).
 */
export function separableStandardErrors(cov: Matrix | null, parameters: Record<string, readonly [number, number, number]>): Record<string, number> {
  const out: Record<string, number> = {};
  if (!cov) return out;
  const p = cov.cols;
  const idx = [0, p - 2, p - 1];
  for (const [name, g] of Object.entries(parameters)) out[name] = combinationSe(cov, idx, g);
  return out;
}
