// The REML criterion of the mixed quadratic model with the residual variance profiled out.
// Write V_t = s² H_t with H_t = I + Z_t Λ Λ' Z_t', Λ = blockdiag(L, θ_block I, ...): L is the
// lower Cholesky factor of G / s² (3 x 3, unconstrained entries: a column's sign does not
// change L L'), θ_k the block sd relative to s. With M_t = I + Λ' Z_t' Z_t Λ (small),
//   |H_t| = |M_t|,   H_t⁻¹ = I - Z_t Λ M_t⁻¹ Λ' Z_t'          (determinant lemma, Woodbury)
// so X'H⁻¹X, X'H⁻¹y, y'H⁻¹y are sums over trials of cross-products. Then
//   β̂ = (X'H⁻¹X)⁻¹ X'H⁻¹y,  s² = (y'H⁻¹y - β̂'X'H⁻¹y) / (n - 3),
//   -2 l_R = Σ log|M_t| + log|X'H⁻¹X| + (n - 3)(1 + log(2π s²)),
// which is the REML deviance lme4 minimises (its logLik is -1/2 of it, no log|X'X| term).
// Random-effect predictions: b_t = Λ M_t⁻¹ Λ' Z_t' (y_t - X_t β̂).
import { cholesky, cholSolve, cholLogDet, cholInverse } from '../../linalg/cholesky.js';
import type { Matrix } from '../../linalg/matrix.js';
import type { MixedNetworkData, MixedTrialData } from './mixedData.js';
import { choleskyInPlace } from '../../linalg/inPlace.js';

export const FIXED = 3;

/** Number of optimised parameters: 6 Cholesky entries + one relative sd per grouping factor. */
export function parameterCount(d: MixedNetworkData): number {
  return 6 + d.grouping.length;
}

/** L (3 x 3 lower, row-major) from theta[0..5] = L00, L10, L11, L20, L21, L22. */
export function choleskyFactor(theta: ArrayLike<number>): Float64Array {
  return Float64Array.from([theta[0], 0, 0, theta[1], theta[2], 0, theta[3], theta[4], theta[5]]);
}

export interface TrialPieces {
  /** Lower Cholesky factor of M_t, q x q row-major (upper part unused). */
  readonly chol: Float64Array;
  readonly cX: Float64Array; // q x 3, Lm⁻¹ Λ'Z'X
  readonly cy: Float64Array; // q, Lm⁻¹ Λ'Z'y
  /** θ of each indicator column (entries 0..2 unused). */
  readonly diag: Float64Array;
  readonly l: Float64Array;
}

function forwardSolve(l: Float64Array, q: number, b: Float64Array, stride: number, col: number): void {
  for (let i = 0; i < q; i++) {
    let s = b[i * stride + col];
    for (let k = 0; k < i; k++) s -= l[i * q + k] * b[k * stride + col];
    b[i * stride + col] = s / l[i * q + i];
  }
}

export function trialPieces(t: MixedTrialData, theta: ArrayLike<number>): TrialPieces {
  const q = t.q;
  const l = choleskyFactor(theta);
  const diag = new Float64Array(q);
  for (let k = 3; k < q; k++) diag[k] = theta[6 + t.indicatorFactor[k - 3]];
  // M = Λ' Z'Z Λ + I, using the structure Λ = blockdiag(L, diag(θ)): the coefficient
  // columns mix through L, each indicator column is only scaled by its θ.
  const zz = t.ztz;
  const m = new Float64Array(q * q);
  // P = Z'Z[:, 0:3] L (q x 3).
  const pm = new Float64Array(q * 3);
  for (let i = 0; i < q; i++)
    for (let j = 0; j < 3; j++) {
      let s = 0;
      for (let k = j; k < 3; k++) s += zz[i * q + k] * l[k * 3 + j];
      pm[i * 3 + j] = s;
    }
  for (let i = 0; i < 3; i++)
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < 3; k++) s += l[k * 3 + i] * pm[k * 3 + j];
      m[i * q + j] = s;
    }
  for (let i = 3; i < q; i++) {
    const ti = diag[i];
    for (let j = 0; j < 3; j++) m[i * q + j] = ti * pm[i * 3 + j];
    for (let j = 3; j <= i; j++) m[i * q + j] = ti * diag[j] * zz[i * q + j];
  }
  for (let i = 0; i < q; i++) m[i * q + i] += 1;
  choleskyInPlace(m, q); // throws NotPositiveDefiniteError
  // Λ'Z'X and Λ'Z'y, then forward-solve by the Cholesky factor.
  const cX = new Float64Array(q * 3);
  const cy = new Float64Array(q);
  for (let i = 0; i < 3; i++) {
    let sy = 0;
    for (let k = i; k < 3; k++) sy += l[k * 3 + i] * t.zty[k];
    cy[i] = sy;
    for (let c = 0; c < 3; c++) {
      let s = 0;
      for (let k = i; k < 3; k++) s += l[k * 3 + i] * t.ztx[k * 3 + c];
      cX[i * 3 + c] = s;
    }
  }
  for (let i = 3; i < q; i++) {
    cy[i] = diag[i] * t.zty[i];
    for (let c = 0; c < 3; c++) cX[i * 3 + c] = diag[i] * t.ztx[i * 3 + c];
  }
  forwardSolve(m, q, cy, 1, 0);
  for (let c = 0; c < 3; c++) forwardSolve(m, q, cX, 3, c);
  return { chol: m, cX, cy, diag, l };
}

export interface RemlSolution {
  /** REML deviance -2 l_R (lme4's REML criterion). */
  readonly deviance: number;
  /** Fixed effects in scaled-rate units: intercept, x/scale, (x/scale)². */
  readonly beta: Float64Array;
  readonly sigma2: number;
  /** (X'H⁻¹X)⁻¹: times sigma2 it is the fixed effects' covariance. */
  readonly unscaledCovariance: Matrix;
}

/**
 * Trials with the same layout (Z'Z, Z'X, X'X and grouping columns equal) share everything in
 * the criterion except their responses: the factor of M_t and Lm⁻¹ Λ'Z'X are computed once per
 * layout and evaluation. The arithmetic per trial is unchanged (same operations, same order),
 * so the criterion is the same to the last bit as computing every trial in full.
 */
interface LayoutGroups {
  /** Layout index of each trial. */
  readonly layoutOf: Int32Array;
  /** One trial of each layout. */
  readonly representatives: readonly MixedTrialData[];
}

const layoutCache = new WeakMap<MixedNetworkData, LayoutGroups>();

function layoutGroups(d: MixedNetworkData): LayoutGroups {
  let g = layoutCache.get(d);
  if (g) return g;
  const index = new Map<string, number>();
  const representatives: MixedTrialData[] = [];
  const layoutOf = new Int32Array(d.trials.length);
  d.trials.forEach((t, i) => {
    const key = `${t.q}|${t.indicatorFactor.join(',')}|${t.ztz.join(',')}|${t.ztx.join(',')}|${t.xtx.join(',')}`;
    let j = index.get(key);
    if (j === undefined) {
      j = representatives.length;
      index.set(key, j);
      representatives.push(t);
    }
    layoutOf[i] = j;
  });
  g = { layoutOf, representatives };
  layoutCache.set(d, g);
  return g;
}

/** What one layout contributes at theta, whatever the responses. */
interface LayoutPieces {
  readonly pieces: TrialPieces;
  /** 2 log of each diagonal entry of the factor of M. */
  readonly logDiagonal: Float64Array;
  /** X'X - (Lm⁻¹ Λ'Z'X)'(Lm⁻¹ Λ'Z'X), 3 x 3. */
  readonly xhx: Float64Array;
}

function layoutPieces(t: MixedTrialData, theta: ArrayLike<number>): LayoutPieces {
  const p = trialPieces(t, theta);
  const q = t.q;
  const logDiagonal = new Float64Array(q);
  for (let i = 0; i < q; i++) logDiagonal[i] = 2 * Math.log(p.chol[i * q + i]);
  const xhx = new Float64Array(9);
  for (let a = 0; a < 3; a++)
    for (let b = 0; b < 3; b++) {
      let s = 0;
      for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * p.cX[k * 3 + b];
      xhx[a * 3 + b] = t.xtx[a * 3 + b] - s;
    }
  return { pieces: p, logDiagonal, xhx };
}

/** Lm⁻¹ Λ'Z'y of trial t into cy, with its layout's pieces. */
function responsePiece(t: MixedTrialData, p: TrialPieces, cy: Float64Array): void {
  const q = t.q;
  const l = p.l;
  for (let i = 0; i < 3; i++) {
    let sy = 0;
    for (let k = i; k < 3; k++) sy += l[k * 3 + i] * t.zty[k];
    cy[i] = sy;
  }
  for (let i = 3; i < q; i++) cy[i] = p.diag[i] * t.zty[i];
  forwardSolve(p.chol, q, cy, 1, 0);
}

/** The criterion and estimates at theta; deviance = Infinity where a factorisation fails. */
export function remlSolution(d: MixedNetworkData, theta: ArrayLike<number>): RemlSolution {
  const xhx = new Float64Array(9);
  const xhy = new Float64Array(3);
  let yhy = 0;
  let logDetH = 0;
  const groups = layoutGroups(d);
  const layouts = groups.representatives.map((t) => layoutPieces(t, theta));
  let cy = new Float64Array(0);
  d.trials.forEach((t, index) => {
    const layout = layouts[groups.layoutOf[index]];
    const p = layout.pieces;
    const q = t.q;
    if (cy.length < q) cy = new Float64Array(q);
    responsePiece(t, p, cy);
    for (let i = 0; i < q; i++) logDetH += layout.logDiagonal[i];
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) xhx[a * 3 + b] += layout.xhx[a * 3 + b];
      let s = 0;
      for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * cy[k];
      xhy[a] += t.xty[a] - s;
    }
    let s = 0;
    for (let k = 0; k < q; k++) s += cy[k] * cy[k];
    yhy += t.yty - s;
  });
  const lx = cholesky({ rows: 3, cols: 3, data: xhx });
  const beta = cholSolve(lx, xhy);
  const pwrss = yhy - (beta[0] * xhy[0] + beta[1] * xhy[1] + beta[2] * xhy[2]);
  const df = d.n - FIXED;
  const sigma2 = pwrss / df;
  const deviance = logDetH + cholLogDet(lx) + df * (1 + Math.log(2 * Math.PI * sigma2));
  return { deviance, beta, sigma2, unscaledCovariance: cholInverse(lx) };
}

export function remlDeviance(d: MixedNetworkData, theta: ArrayLike<number>): number {
  try {
    const v = remlSolution(d, theta).deviance;
    return Number.isFinite(v) ? v : Infinity;
  } catch {
    return Infinity;
  }
}

/** Predicted trial deviations (intercept, slope, curvature; scaled-rate units) per trial. */
export function trialDeviations(d: MixedNetworkData, theta: ArrayLike<number>, beta: ArrayLike<number>): Float64Array[] {
  return d.trials.map((t) => {
    const p = trialPieces(t, theta);
    const q = t.q;
    // Λ'Z'(y - Xβ) = Lm (cy - cX β); then M⁻¹ of it = Lm'⁻¹ (cy - cX β).
    const r = new Float64Array(q);
    for (let i = 0; i < q; i++) r[i] = p.cy[i] - (p.cX[i * 3] * beta[0] + p.cX[i * 3 + 1] * beta[1] + p.cX[i * 3 + 2] * beta[2]);
    const lt = p.chol;
    for (let i = q - 1; i >= 0; i--) {
      let s = r[i];
      for (let k = i + 1; k < q; k++) s -= lt[k * q + i] * r[k];
      r[i] = s / lt[i * q + i];
    }
    const u = new Float64Array(3);
    for (let i = 0; i < 3; i++) {
      let s = 0;
      for (let k = 0; k <= i; k++) s += p.l[i * 3 + k] * r[k];
      u[i] = s;
    }
    return u;
  });
}
