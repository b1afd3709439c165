// One trial's block of V = sigma2 I + Z G Z' evaluated through Woodbury and the determinant
// lemma on the trial's Gram matrix. With D = G^(1/2) and M = sigma2 I + D Z'Z D:
//   V^-1 = (I - Z W Z') / sigma2, W = D M^-1 D      (well defined when some variances are 0)
//   log|V| = (n - r) log sigma2 + log|M|
// so B'V^-1 B = (K - K_.R W K_R.) / sigma2 with K = B'B, and powers of V^-1 follow by recursion.
// Trials with the same design (same Z'Z) and the same residual parameter share M, W and the
// design block of B'V^-1 B: that part is computed once per design pattern; the data enter
// through the pattern's moments (patternMoments.ts).
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
