// The REML criterion of the crossed model at given relative standard deviations (lme4's theta:
// each term's sd over the residual sd), with the residual variance profiled out.
//
// Within a trial, plots share the trial intercept, their block and their treatment-by-trial
// effect: H0_i = I + g_trial 11' + g_block BB' + g_txtrial TT' (n_i x n_i, in residual units).
// The shared effects (site, year and their treatment interactions) enter through Z Lambda, so
// H = H0 + Z Lambda Lambda' Z' and, by the determinant lemma and Woodbury,
//   log|H| = sum_i log|H0_i| + log|M|,   M = I + Lambda' Z' H0^-1 Z Lambda,
// where M is block-diagonal per site with a dense border of year effects. The fixed effects and
// the response are appended to that border, so one Cholesky of the arrowhead gives log|M|,
// log|X'H^-1 X| and r'H^-1 r (the last pivot squared), as in lme4's blocked factor.
// Every trial enters through the basis K = [1 | T] of its plots: K'H0^-1 K, K'H0^-1 y, y'H0^-1 y.
import type { CrossedData, CrossedTrial } from './crossedData.js';
import { localColumns, type CrossedLayout, type LocalColumn } from './crossedLayout.js';
import { backSolveTranspose, choleskyInPlace, forwardSolve, forwardSolveColumns } from './denseSmall.js';

export interface CrossedFactor {
  /** Per site: its block's lower factor (bs x bs) and W = L^-1 C (bs x border). */
  readonly siteFactor: readonly Float64Array[];
  readonly siteW: readonly Float64Array[];
  /** Lower factor of the border after the sites are eliminated (border x border). */
  readonly borderFactor: Float64Array;
}

export interface CrossedEvaluation {
  readonly theta: Float64Array;
  /** -2 REML log-likelihood with the residual variance at its optimum for theta. */
  readonly criterion: number;
  readonly sigma2: number;
  readonly logDetH: number;
  readonly logDetXHX: number;
  readonly rHr: number;
  readonly beta: Float64Array;
  /** (X'H^-1 X)^-1, p x p: the fixed effects' covariance divided by sigma². */
  readonly xhxInverse: Float64Array;
  readonly factor: CrossedFactor;
  /** The per-trial pieces the evaluation was assembled from (the derivatives reuse them). */
  readonly pieces: readonly TrialPieces[];
}

/** Per-trial pieces: K'H0^-1 K (m x m), K'H0^-1 y, y'H0^-1 y and log|H0|, and the trial's layout factor. */
export interface TrialPieces {
  readonly a: Float64Array;
  readonly b: Float64Array;
  readonly c: number;
  readonly logDet: number;
  readonly layout: LayoutFactor;
}

/** H0 = L L' of one layout of plots (n x n lower factor), L^-1 K (n x m), K'H0^-1 K, log|H0|. */
export interface LayoutFactor {
  readonly l: Float64Array;
  readonly lk: Float64Array;
  readonly a: Float64Array;
  readonly logDet: number;
}

/**
 * The factor of one trial's plots: gTrial 11' + gBlock BB' + gTT TT' + diagonal I (diagonal 1 in
 * the common-residual model's ratios; the trial's own residual variance when each trial has one).
 */
export function layoutFactor(tr: CrossedTrial, m: number, gTrial: number, gBlock: number, gTT: number, diagonal = 1): LayoutFactor | null {
  const n = tr.y.length;
  const h = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let v = gTrial;
      if (i === j) v += diagonal;
      if (tr.block[i] >= 0 && tr.block[i] === tr.block[j]) v += gBlock;
      if (tr.treatment[i] === tr.treatment[j]) v += gTT;
      h[i * n + j] = v;
    }
  if (!choleskyInPlace(h, n)) return null;
  let logDet = 0;
  for (let i = 0; i < n; i++) logDet += 2 * Math.log(h[i * n + i]);
  const lk = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    lk[i * m] = 1;
    lk[i * m + 1 + tr.treatment[i]] = 1;
  }
  forwardSolveColumns(h, n, lk, m);
  const a = new Float64Array(m * m);
  for (let i = 0; i < n; i++)
    for (let r = 0; r < m; r++) {
      const x = lk[i * m + r];
      if (x === 0) continue;
      for (let s = 0; s <= r; s++) a[r * m + s] += x * lk[i * m + s];
    }
  for (let r = 0; r < m; r++) for (let s = 0; s < r; s++) a[s * m + r] = a[r * m + s];
  return { l: h, lk, a, logDet };
}

export function trialPieces(d: CrossedData, L: CrossedLayout, theta: ArrayLike<number>): TrialPieces[] | null {
  const g = (k: number) => (k >= 0 ? theta[k] * theta[k] : 0);
  const gTrial = g(L.at.trial);
  const gBlock = g(L.at.block);
  const gTT = g(L.at['treatment-by-trial']);
  const m = 1 + L.t;
  const cache = new Map<string, LayoutFactor>();
  const out: TrialPieces[] = [];
  let maxN = 0;
  for (const tr of d.trials) maxN = Math.max(maxN, tr.y.length);
  const ly = new Float64Array(maxN);
  for (const tr of d.trials) {
    let f = cache.get(tr.layoutKey);
    if (!f) {
      const made = layoutFactor(tr, m, gTrial, gBlock, gTT);
      if (!made) return null;
      f = made;
      cache.set(tr.layoutKey, f);
    }
    const n = tr.y.length;
    ly.set(tr.y);
    forwardSolve(f.l, n, n, ly);
    const b = new Float64Array(m);
    const lk = f.lk;
    let c = 0;
    for (let i = 0; i < n; i++) {
      const v = ly[i];
      c += v * v;
      for (let r = 0; r < m; r++) b[r] += lk[i * m + r] * v;
    }
    out.push({ a: f.a, b, c, logDet: f.logDet, layout: f });
  }
  return out;
}

/** Assemble and factor the arrowhead; null when a block is not positive definite (fixed effects not estimable). */
export function evaluateCrossed(d: CrossedData, L: CrossedLayout, thetaIn: ArrayLike<number>, pieces?: readonly TrialPieces[] | null): CrossedEvaluation | null {
  const theta = Float64Array.from(thetaIn, Math.abs);
  const tp = pieces ?? trialPieces(d, L, theta);
  if (!tp) return null;
  const B = L.border;
  const bs = L.bs;
  const m = 1 + L.t;
  // one allocation for every site's block and coupling (views into it are kept in the factor)
  const store = new Float64Array(L.nSites * (bs * bs + bs * B));
  const siteM = Array.from({ length: L.nSites }, (_, s) => store.subarray(s * bs * bs, (s + 1) * bs * bs));
  const cOffset = L.nSites * bs * bs;
  const siteC = Array.from({ length: L.nSites }, (_, s) => store.subarray(cOffset + s * bs * B, cOffset + (s + 1) * bs * B));
  const border = new Float64Array(B * B);
  const columnsByYear: (PackedColumns | undefined)[] = new Array(L.nYears);
  let logDetH0 = 0;
  const y = B - 1;
  for (let i = 0; i < d.trials.length; i++) {
    const tr = d.trials[i];
    const { a, b, c, logDet } = tp[i];
    logDetH0 += logDet;
    const cols = (columnsByYear[tr.year] ??= pack(localColumns(L, tr.year, theta)));
    const { row, value, index, n } = cols;
    const sm = siteM[tr.site];
    const sc = siteC[tr.site];
    // the first bs local columns are the site's own effects (localColumns puts them first)
    for (let ui = 0; ui < n; ui++) {
      const ur = row[ui] * m;
      const uv = value[ui];
      const ux = index[ui];
      const gu = uv * b[row[ui]];
      if (ui < bs) {
        const rowC = ux * B;
        const rowM = ux * bs;
        sc[rowC + y] += gu;
        for (let vi = 0; vi < bs; vi++) sm[rowM + index[vi]] += uv * value[vi] * a[ur + row[vi]];
        for (let vi = bs; vi < n; vi++) sc[rowC + index[vi]] += uv * value[vi] * a[ur + row[vi]];
      } else {
        const rowB = ux * B;
        border[rowB + y] += gu;
        border[y * B + ux] += gu;
        for (let vi = bs; vi < n; vi++) border[rowB + index[vi]] += uv * value[vi] * a[ur + row[vi]];
      }
    }
    border[y * B + y] += c;
  }
  for (let k = 0; k < L.q; k++) border[k * B + k] += 1;
  let logDetM = 0;
  const siteFactor: Float64Array[] = [];
  const touched = new Int32Array(B);
  let wt = new Float64Array(B * bs);
  const siteW: Float64Array[] = [];
  for (let s = 0; s < L.nSites; s++) {
    const sm = siteM[s];
    for (let k = 0; k < bs; k++) sm[k * bs + k] += 1;
    if (bs === 0) {
      siteFactor.push(sm);
      siteW.push(siteC[s]);
      continue;
    }
    if (!choleskyInPlace(sm, bs)) return null;
    for (let k = 0; k < bs; k++) logDetM += 2 * Math.log(sm[k * bs + k]);
    const w = siteC[s];
    forwardSolveColumns(sm, bs, w, B);
    // border -= W'W over the columns this site touches (its years, the fixed effects, the response)
    let nz = 0;
    for (let i = 0; i < B; i++) {
      let any = false;
      for (let r = 0; r < bs; r++) if (w[r * B + i] !== 0) any = true;
      if (any) touched[nz++] = i;
    }
    // W's touched columns gathered contiguously (column a at wt[a * bs]) for the inner sum
    if (wt.length < nz * bs) wt = new Float64Array(B * bs);
    for (let a = 0; a < nz; a++) for (let r = 0; r < bs; r++) wt[a * bs + r] = w[r * B + touched[a]];
    for (let a = 0; a < nz; a++) {
      const rowI = touched[a] * B;
      const ca = a * bs;
      for (let b = 0; b <= a; b++) {
        const cb = b * bs;
        let sum = 0;
        for (let r = 0; r < bs; r++) sum += wt[ca + r] * wt[cb + r];
        border[rowI + touched[b]] -= sum;
      }
    }
    siteFactor.push(sm);
    siteW.push(w);
  }
  for (let i = 0; i < B; i++) for (let j = 0; j < i; j++) border[j * B + i] = border[i * B + j];
  if (!choleskyInPlace(border, B)) return null;
  let logDetXHX = 0;
  for (let k = 0; k < L.q; k++) logDetM += 2 * Math.log(border[k * B + k]);
  for (let k = L.q; k < L.q + L.p; k++) logDetXHX += 2 * Math.log(border[k * B + k]);
  const rHr = border[y * B + y] ** 2;
  const N = d.nObservations;
  const df = N - L.p;
  const sigma2 = rHr / df;
  const logDetH = logDetH0 + logDetM;
  const criterion = df * (1 + Math.log(2 * Math.PI * sigma2)) + logDetH + logDetXHX;
  // fixed effects: back-substitute the response's row of the factor through the border
  const x = new Float64Array(B - 1);
  for (let k = 0; k < B - 1; k++) x[k] = border[y * B + k];
  backSolveTranspose(border, B, B - 1, x);
  const beta = x.slice(L.q, L.q + L.p);
  const xhxInverse = betaBlockInverse(border, B, L.q, L.p);
  return { theta, criterion, sigma2, logDetH, logDetXHX, rHr, beta, xhxInverse, factor: { siteFactor, siteW, borderFactor: border }, pieces: tp };
}

/** (X'H^-1X)^-1 = (R R')^-1 with R the fixed effects' diagonal block of the border factor. */
function betaBlockInverse(f: Float64Array, B: number, q: number, p: number): Float64Array {
  const r = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j <= i; j++) r[i * p + j] = f[(q + i) * B + q + j];
  const inv = new Float64Array(p * p);
  for (let c = 0; c < p; c++) {
    const e = new Float64Array(p);
    e[c] = 1;
    forwardSolve(r, p, p, e);
    backSolveTranspose(r, p, p, e);
    for (let i = 0; i < p; i++) inv[i * p + c] = e[i];
  }
  return inv;
}

/** A trial's local columns as parallel typed arrays, for the assembly's inner loop. */
export interface PackedColumns {
  readonly n: number;
  readonly row: Int32Array;
  readonly value: Float64Array;
  readonly inSite: Uint8Array;
  readonly index: Int32Array;
}

export function pack(cols: readonly LocalColumn[]): PackedColumns {
  return {
    n: cols.length,
    row: Int32Array.from(cols, (c) => c.row),
    value: Float64Array.from(cols, (c) => c.value),
    inSite: Uint8Array.from(cols, (c) => (c.inSite ? 1 : 0)),
    index: Int32Array.from(cols, (c) => c.index),
  };
}

/** -2 REML log-likelihood at residual variance sigma2 (not profiled), from an evaluation's pieces. */
export function unprofiledCriterion(ev: CrossedEvaluation, sigma2: number, N: number, p: number): number {
  const df = N - p;
  return df * Math.log(2 * Math.PI) + (N - p) * Math.log(sigma2) + ev.logDetH + ev.logDetXHX + ev.rHr / sigma2;
}
