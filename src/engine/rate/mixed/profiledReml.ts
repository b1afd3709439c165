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
import { layoutResponseSums, type LayoutResponseSums } from './layoutSums.js';
import { groupLayouts } from './layoutKey.js';

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
 * layout and evaluation; the responses enter through each layout's sums (layoutSums.ts), so an
 * evaluation's cost does not grow with the number of trials of a layout.
 */
interface LayoutGroups {
  /** Layout index of each trial. */
  readonly layoutOf: Int32Array;
  /** One trial of each layout. */
  readonly representatives: readonly MixedTrialData[];
  /** Each layout's response sums. */
  readonly responses: readonly LayoutResponseSums[];
  /** The trials of each layout (indices into d.trials). */
  readonly members: readonly number[][];
}

const layoutCache = new WeakMap<MixedNetworkData, LayoutGroups>();

function layoutGroups(d: MixedNetworkData): LayoutGroups {
  let g = layoutCache.get(d);
  if (g) return g;
  const { layoutOf, representatives } = groupLayouts(d.trials);
  const members: number[][] = representatives.map(() => []);
  layoutOf.forEach((j, i) => members[j].push(i));
  g = { layoutOf, representatives, responses: layoutResponseSums(d, layoutOf, representatives.length), members };
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

/** Lm⁻¹ Λ' z into out (z: a trial's Z'y or a layout's mean of them). */
function applyB(q: number, p: TrialPieces, z: ArrayLike<number>, out: Float64Array): void {
  const l = p.l;
  for (let i = 0; i < 3; i++) {
    let sy = 0;
    for (let k = i; k < 3; k++) sy += l[k * 3 + i] * z[k];
    out[i] = sy;
  }
  for (let i = 3; i < q; i++) out[i] = p.diag[i] * z[i];
  forwardSolve(p.chol, q, out, 1, 0);
}

/** What the criterion sums over trials: X'H⁻¹X, X'H⁻¹y, y'H⁻¹y (without the s² factor) and log|H|. */
interface CriterionSums {
  readonly xhx: Float64Array;
  readonly xhy: Float64Array;
  readonly yhy: number;
  readonly logDetH: number;
}

interface Accumulator {
  xhx: Float64Array;
  xhy: Float64Array;
  yhy: number;
  logDetH: number;
  /** Scratch for one trial's Lm⁻¹ Λ'Z'y. */
  cy: Float64Array;
}

function accumulator(): Accumulator {
  return { xhx: new Float64Array(9), xhy: new Float64Array(3), yhy: 0, logDetH: 0, cy: new Float64Array(0) };
}

/** One trial's terms, through its layout's pieces. */
function addTrial(acc: Accumulator, t: MixedTrialData, layout: LayoutPieces): void {
  const p = layout.pieces;
  const q = t.q;
  if (acc.cy.length < q) acc.cy = new Float64Array(q);
  const cy = acc.cy;
  applyB(q, p, t.zty, cy);
  for (let i = 0; i < q; i++) acc.logDetH += layout.logDiagonal[i];
  for (let a = 0; a < 3; a++) {
    for (let b = 0; b < 3; b++) acc.xhx[a * 3 + b] += layout.xhx[a * 3 + b];
    let s = 0;
    for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * cy[k];
    acc.xhy[a] += t.xty[a] - s;
  }
  let s = 0;
  for (let k = 0; k < q; k++) s += cy[k] * cy[k];
  acc.yhy += t.yty - s;
}

/** The sums trial by trial (the plain path). */
function sumsByTrial(d: MixedNetworkData, groups: LayoutGroups, layouts: readonly LayoutPieces[]): CriterionSums {
  const acc = accumulator();
  d.trials.forEach((t, index) => addTrial(acc, t, layouts[groups.layoutOf[index]]));
  return acc;
}

/**
 * The same sums from each layout's response sums (layoutSums.ts): O(q³) per layout. A layout of
 * fewer than q trials is cheaper trial by trial, and is summed so.
 */
function sumsByLayout(d: MixedNetworkData, groups: LayoutGroups, layouts: readonly LayoutPieces[]): CriterionSums {
  const acc = accumulator();
  layouts.forEach((layout, j) => {
    const p = layout.pieces;
    const sums = groups.responses[j];
    const q = sums.zMean.length;
    const m = sums.count;
    if (m < q) {
      for (const index of groups.members[j]) addTrial(acc, d.trials[index], layout);
      return;
    }
    let logDiag = 0;
    for (let i = 0; i < q; i++) logDiag += layout.logDiagonal[i];
    acc.logDetH += m * logDiag;
    // B = Lm⁻¹ Λ', column by column (Λ' is the unit columns scaled/mixed by L' and θ).
    const b = new Float64Array(q * q);
    const unit = new Float64Array(q);
    const col = new Float64Array(q);
    for (let c = 0; c < q; c++) {
      unit.fill(0);
      unit[c] = 1;
      applyB(q, p, unit, col);
      for (let i = 0; i < q; i++) b[i * q + c] = col[i];
    }
    const cyMean = new Float64Array(q);
    applyB(q, p, sums.zMean, cyMean);
    // tr(B C B') = Σ_k Σ_ij B_ki C_ij B_kj
    let spread = 0;
    for (let k = 0; k < q; k++)
      for (let i = 0; i < q; i++) {
        const bki = b[k * q + i];
        if (bki === 0) continue;
        let s = 0;
        for (let jj = 0; jj < q; jj++) s += sums.zScatter[i * q + jj] * b[k * q + jj];
        spread += bki * s;
      }
    let meanPart = 0;
    for (let k = 0; k < q; k++) meanPart += cyMean[k] * cyMean[k];
    acc.yhy += sums.yty - (spread + m * meanPart);
    for (let a = 0; a < 3; a++) {
      for (let c = 0; c < 3; c++) acc.xhx[a * 3 + c] += m * layout.xhx[a * 3 + c];
      let s = 0;
      for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * cyMean[k];
      acc.xhy[a] += sums.xty[a] - m * s;
    }
  });
  return acc;
}

/**
 * The criterion and estimates at theta; deviance = Infinity where a factorisation fails.
 * `sums`: 'layout' (default) sums the responses per layout; 'trial' goes trial by trial, the
 * plain computation the fast one is tested against (1e-10 relative: rounding of the sums only).
 */
export function remlSolution(d: MixedNetworkData, theta: ArrayLike<number>, sums: 'layout' | 'trial' = 'layout'): RemlSolution {
  const groups = layoutGroups(d);
  const layouts = groups.representatives.map((t) => layoutPieces(t, theta));
  const { xhx, xhy, yhy, logDetH } = sums === 'layout' ? sumsByLayout(d, groups, layouts) : sumsByTrial(d, groups, layouts);
  const lx = cholesky({ rows: 3, cols: 3, data: xhx });
  const beta = cholSolve(lx, xhy);
  const pwrss = yhy - (beta[0] * xhy[0] + beta[1] * xhy[1] + beta[2] * xhy[2]);
  const df = d.n - FIXED;
  const sigma2 = pwrss / df;
  const deviance = logDetH + cholLogDet(lx) + df * (1 + Math.log(2 * Math.PI * sigma2));
  return { deviance, beta, sigma2, unscaledCovariance: cholInverse(lx) };
}

export function remlDeviance(d: MixedNetworkData, theta: ArrayLike<number>, sums: 'layout' | 'trial' = 'layout'): number {
  try {
    const v = remlSolution(d, theta, sums).deviance;
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
