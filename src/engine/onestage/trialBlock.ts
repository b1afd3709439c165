// One trial's block of V = sigma2 I + Z G Z' evaluated through Woodbury and the determinant
// lemma on the trial's Gram matrix. With D = G^(1/2) and M = sigma2 I + D Z'Z D:
//   V^-1 = (I - Z W Z') / sigma2, W = D M^-1 D      (well defined when some variances are 0)
//   log|V| = (n - r) log sigma2 + log|M|
// so B'V^-1 B = (K - K_.R W K_R.) / sigma2 with K = B'B, and powers of V^-1 follow by recursion.
// Trials with the same design (same Z'Z) and the same residual parameter share M, W and the
// design block of B'V^-1 B: that part is computed once per design pattern, and only the
// y row and column are computed per trial.
import { choleskyInPlace, inverseFromCholesky } from './smallSpd.js';
import type { TrialStatistics } from './sufficientStatistics.js';

/** The part of a block shared by all trials of one design pattern. */
export interface PatternState {
  readonly sigma2: number;
  readonly logDetM: number;
  readonly randomColumns: Int32Array;
  /** W = D M^-1 D over the random columns (r x r). */
  readonly w: Float64Array;
  /** K_ZR W over the design columns Z (all columns but y), (m - 1) x r. */
  readonly gz: Float64Array;
  /** Design block of B'V^-1 B, (m - 1) x (m - 1). */
  readonly hzz: Float64Array;
  /** Design block of B'V^-2 B, filled on first use. */
  h2zz: Float64Array | null;
  readonly trWK: number;
  readonly trWKWK: number;
}

export interface TrialBlockState {
  readonly sigma2: number;
  readonly logDetV: number;
  readonly randomColumns: Int32Array;
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
  readonly pattern: PatternState;
}

export function randomColumnsOf(stats: TrialStatistics): Int32Array {
  const out: number[] = [];
  for (let j = 0; j < stats.termOfColumn.length; j++) if (stats.termOfColumn[j] >= 0) out.push(j);
  return Int32Array.from(out);
}

/** Key that is equal for trials whose design block of the Gram matrix is identical. */
export function designKey(stats: TrialStatistics): string {
  const mz = stats.m - 1;
  const parts: number[] = [stats.n, stats.m];
  for (let i = 0; i < mz; i++) parts.push(stats.termOfColumn[i]);
  // the treatments' positions in X matter too: trials of a pattern share their X'V^-1 X block
  parts.push(-1, ...stats.treatmentIndex);
  for (let i = 0; i < mz; i++) for (let j = i; j < mz; j++) parts.push(stats.gram[i * stats.m + j]);
  return parts.join(',');
}

/** Shared part for a representative trial, term variances `termVariance[term]` and sigma2. */
export function evaluatePattern(stats: TrialStatistics, randomColumns: Int32Array, termVariance: ArrayLike<number>, sigma2: number): PatternState {
  const m = stats.m;
  const mz = m - 1;
  const K = stats.gram;
  const R = randomColumns;
  const r = R.length;
  const d = new Float64Array(r);
  for (let a = 0; a < r; a++) d[a] = Math.sqrt(Math.max(0, termVariance[stats.termOfColumn[R[a]]]));
  const mm = new Float64Array(r * r);
  for (let a = 0; a < r; a++) {
    const ka = R[a] * m;
    for (let b = 0; b < r; b++) mm[a * r + b] = d[a] * K[ka + R[b]] * d[b];
    mm[a * r + a] += sigma2;
  }
  const logDetM = choleskyInPlace(mm, r);
  const minv = new Float64Array(r * r);
  inverseFromCholesky(mm, r, minv, new Float64Array(r * r));
  const w = new Float64Array(r * r);
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) w[a * r + b] = d[a] * minv[a * r + b] * d[b];
  const gz = new Float64Array(mz * r);
  for (let i = 0; i < mz; i++) {
    const ko = i * m;
    for (let b = 0; b < r; b++) {
      let s = 0;
      for (let a = 0; a < r; a++) s += K[ko + R[a]] * w[a * r + b];
      gz[i * r + b] = s;
    }
  }
  const hzz = new Float64Array(mz * mz);
  for (let i = 0; i < mz; i++)
    for (let j = i; j < mz; j++) {
      let s = K[i * m + j];
      for (let b = 0; b < r; b++) s -= gz[i * r + b] * K[R[b] * m + j];
      hzz[i * mz + j] = s / sigma2;
      hzz[j * mz + i] = s / sigma2;
    }
  let trWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWK += w[a * r + b] * K[R[b] * m + R[a]];
  // tr(W K W K) = sum_ab (K W)_ab (K W)_ba over the random rows of gz
  let trWKWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWKWK += gz[R[a] * r + b] * gz[R[b] * r + a];
  return { sigma2, logDetM, randomColumns: R, w, gz, hzz, h2zz: null, trWK, trWKWK };
}

/** A trial's block from its pattern: copy the shared design part, compute the y row and column. */
export function trialFromPattern(stats: TrialStatistics, pat: PatternState): TrialBlockState {
  const m = stats.m;
  const mz = m - 1;
  const K = stats.gram;
  const R = pat.randomColumns;
  const r = R.length;
  const s2 = pat.sigma2;
  const kw = new Float64Array(m * r);
  kw.set(pat.gz);
  const yo = mz * m;
  for (let b = 0; b < r; b++) {
    let s = 0;
    for (let a = 0; a < r; a++) s += K[yo + R[a]] * pat.w[a * r + b];
    kw[mz * r + b] = s;
  }
  const h = new Float64Array(m * m);
  for (let i = 0; i < mz; i++) h.set(pat.hzz.subarray(i * mz, i * mz + mz), i * m);
  for (let i = 0; i < m; i++) {
    let s = K[i * m + mz];
    for (let b = 0; b < r; b++) s -= kw[i * r + b] * K[R[b] * m + mz];
    h[i * m + mz] = s / s2;
    h[mz * m + i] = s / s2;
  }
  return {
    sigma2: s2,
    logDetV: (stats.n - r) * Math.log(s2) + pat.logDetM,
    randomColumns: R,
    w: pat.w,
    kw,
    h,
    h2: null,
    trWK: pat.trWK,
    trWKWK: pat.trWKWK,
    pattern: pat,
  };
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
  if (s.h2) return s.h2;
  const m = stats.m;
  const mz = m - 1;
  const pat = s.pattern;
  const h2zz = ensurePatternH2(pat, mz);
  const R = s.randomColumns;
  const r = R.length;
  const out = new Float64Array(m * m);
  for (let i = 0; i < mz; i++) out.set(h2zz.subarray(i * mz, i * mz + mz), i * m);
  for (let i = 0; i < m; i++) {
    let v = s.h[i * m + mz];
    for (let b = 0; b < r; b++) v -= s.kw[i * r + b] * s.h[R[b] * m + mz];
    out[i * m + mz] = v / s.sigma2;
    out[mz * m + i] = v / s.sigma2;
  }
  s.h2 = out;
  return out;
}

/** Design block of B'V^-2 B for a pattern: (hzz - gz hzz_R.) / sigma2, computed once. */
export function ensurePatternH2(pat: PatternState, mz: number): Float64Array {
  if (pat.h2zz) return pat.h2zz;
  const R = pat.randomColumns;
  const r = R.length;
  const out = new Float64Array(mz * mz);
  for (let i = 0; i < mz; i++)
    for (let j = 0; j < mz; j++) {
      let v = pat.hzz[i * mz + j];
      for (let b = 0; b < r; b++) v -= pat.gz[i * r + b] * pat.hzz[R[b] * mz + j];
      out[i * mz + j] = v / pat.sigma2;
    }
  pat.h2zz = out;
  return out;
}
