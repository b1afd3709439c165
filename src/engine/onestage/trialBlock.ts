// One trial's block of V = sigma2 I + Z G Z' evaluated through Woodbury and the determinant
// lemma on the trial's Gram matrix. With D = G^(1/2) and M = sigma2 I + D Z'Z D:
//   V^-1 = (I - Z W Z') / sigma2, W = D M^-1 D      (well defined when some variances are 0)
//   log|V| = (n - r) log sigma2 + log|M|
// so B'V^-1 B = (K - K_.R W K_R.) / sigma2 with K = B'B, and powers of V^-1 follow by recursion.
import { cholesky, cholInverse, cholLogDet, type Matrix } from '../linalg/index.js';
import type { TrialStatistics } from './sufficientStatistics.js';

export interface TrialBlockState {
  readonly sigma2: number;
  readonly logDetV: number;
  /** Random columns of B (those with a random term). */
  readonly randomColumns: Int32Array;
  /** W = D M^-1 D over the random columns (r x r). */
  readonly w: Float64Array;
  /** K_.R W (m x r). */
  readonly kw: Float64Array;
  /** B'V^-1 B (m x m). */
  readonly h: Float64Array;
  /** B'V^-2 B (m x m), filled on demand (needed for the residual derivatives). */
  h2: Float64Array | null;
  /** tr(W K_RR) and tr(W K_RR W K_RR): the traces of V^-1 and V^-2 need them. */
  readonly trWK: number;
  readonly trWKWK: number;
}

export function randomColumnsOf(stats: TrialStatistics): Int32Array {
  const out: number[] = [];
  for (let j = 0; j < stats.termOfColumn.length; j++) if (stats.termOfColumn[j] >= 0) out.push(j);
  return Int32Array.from(out);
}

/** Evaluate the block for term variances `termVariance[term]` and residual variance sigma2. */
export function evaluateTrialBlock(stats: TrialStatistics, randomColumns: Int32Array, termVariance: ArrayLike<number>, sigma2: number): TrialBlockState {
  const m = stats.m;
  const K = stats.gram;
  const r = randomColumns.length;
  const d = new Float64Array(r);
  for (let a = 0; a < r; a++) d[a] = Math.sqrt(Math.max(0, termVariance[stats.termOfColumn[randomColumns[a]]]));
  const mm: Matrix = { rows: r, cols: r, data: new Float64Array(r * r) };
  for (let a = 0; a < r; a++) {
    const ka = randomColumns[a] * m;
    for (let b = 0; b < r; b++) mm.data[a * r + b] = d[a] * K[ka + randomColumns[b]] * d[b];
    mm.data[a * r + a] += sigma2;
  }
  const l = cholesky(mm);
  const logDetV = (stats.n - r) * Math.log(sigma2) + cholLogDet(l);
  const minv = cholInverse(l).data;
  const w = new Float64Array(r * r);
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) w[a * r + b] = d[a] * minv[a * r + b] * d[b];
  // kw = K_.R W
  const kw = new Float64Array(m * r);
  for (let i = 0; i < m; i++) {
    const ko = i * m;
    for (let b = 0; b < r; b++) {
      let s = 0;
      for (let a = 0; a < r; a++) s += K[ko + randomColumns[a]] * w[a * r + b];
      kw[i * r + b] = s;
    }
  }
  const h = new Float64Array(m * m);
  for (let i = 0; i < m; i++)
    for (let j = i; j < m; j++) {
      let s = K[i * m + j];
      for (let b = 0; b < r; b++) s -= kw[i * r + b] * K[randomColumns[b] * m + j];
      h[i * m + j] = s / sigma2;
      h[j * m + i] = s / sigma2;
    }
  let trWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWK += w[a * r + b] * K[randomColumns[b] * m + randomColumns[a]];
  // tr(W K W K) = sum_ab (WK)_ab (WK)_ba, with (K W)_{R,.} = kw rows at R
  let trWKWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWKWK += kw[randomColumns[a] * r + b] * kw[randomColumns[b] * r + a];
  return { sigma2, logDetV, randomColumns, w, kw, h, h2: null, trWK, trWKWK };
}

/** B'V^-(j+1) B from B'V^-j B: (prev - K_.R W prev_R.) / sigma2. */
export function nextInversePower(stats: TrialStatistics, s: TrialBlockState, prev: Float64Array): Float64Array {
  const m = stats.m;
  const R = s.randomColumns;
  const r = R.length;
  const out = new Float64Array(m * m);
  for (let i = 0; i < m; i++)
    for (let j = 0; j < m; j++) {
      let v = prev[i * m + j];
      for (let b = 0; b < r; b++) v -= s.kw[i * r + b] * prev[R[b] * m + j];
      out[i * m + j] = v / s.sigma2;
    }
  return out;
}

export function ensureH2(stats: TrialStatistics, s: TrialBlockState): Float64Array {
  if (!s.h2) s.h2 = nextInversePower(stats, s, s.h);
  return s.h2;
}
