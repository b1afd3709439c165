// One trial's block of V = sigma2 I + Z G Z' evaluated through Woodbury and the determinant
// lemma on the trial's Gram matrix. With D = G^(1/2) and M = sigma2 I + D Z'Z D:
//   V^-1 = (I - Z W Z') / sigma2, W = D M^-1 D      (well defined when some variances are 0)
//   log|V| = (n - r) log sigma2 + log|M|
// so B'V^-1 B = (K - K_.R W K_R.) / sigma2 with K = B'B, and powers of V^-1 follow by recursion.
// Trials with the same design (same Z'Z) and the same residual parameter share M, W and the
// design block of B'V^-1 B: that part is computed once per design pattern; the data enter
// through the pattern's moments (patternMoments.ts).
import { choleskyInPlace, inverseFromCholesky } from '../linalg/inPlace.js';
import type { TrialStatistics } from './sufficientStatistics.js';
import { Scratch } from './arena.js';

const dScratch = new Scratch();
const mScratch = new Scratch();
const invScratch = new Scratch();
const workScratch = new Scratch();

/**
 * The part of a block shared by all trials of one design pattern. Its arrays are views into an
 * evaluation's buffers (evaluationPool.ts), filled in place by evaluatePattern and reused once
 * the optimiser has discarded that evaluation.
 */
export interface PatternState {
  sigma2: number;
  logDetM: number;
  readonly randomColumns: Int32Array;
  /** W = D M^-1 D over the random columns (r x r). */
  readonly w: Float64Array;
  /** K_ZR W over the design columns Z (all columns but y), (m - 1) x r. */
  readonly gz: Float64Array;
  /** Design block of B'V^-1 B, (m - 1) x (m - 1). */
  readonly hzz: Float64Array;
  /** Design block of B'V^-2 B, valid once h2Ready (ensurePatternH2). */
  readonly h2zz: Float64Array;
  h2Ready: boolean;
  trWK: number;
  trWKWK: number;
}

/** Doubles a pattern's state takes in an evaluation's buffer. */
export function patternStateSize(stats: TrialStatistics, randomColumns: Int32Array): number {
  const r = randomColumns.length;
  const mz = stats.m - 1;
  return r * r + mz * r + 2 * mz * mz;
}

/** A pattern state whose arrays are views of `slab` from `offset` on (patternStateSize doubles). */
export function patternStateIn(stats: TrialStatistics, randomColumns: Int32Array, slab: Float64Array, offset: number): PatternState {
  const r = randomColumns.length;
  const mz = stats.m - 1;
  const view = (n: number): Float64Array => {
    const v = new Float64Array(slab.buffer, slab.byteOffset + offset * 8, n);
    offset += n;
    return v;
  };
  return { sigma2: NaN, logDetM: NaN, randomColumns, w: view(r * r), gz: view(mz * r), hzz: view(mz * mz), h2zz: view(mz * mz), h2Ready: false, trWK: NaN, trWKWK: NaN };
}

export function randomColumnsOf(stats: TrialStatistics): Int32Array {
  const out: number[] = [];
  for (let j = 0; j < stats.termOfColumn.length; j++) if (stats.termOfColumn[j] >= 0) out.push(j);
  return Int32Array.from(out);
}

/** Hash of what sameDesign compares (n, m, column terms, treatments, design block of the Gram matrix). */
export function designHash(stats: TrialStatistics): number {
  const mz = stats.m - 1;
  let h = mix(mix(0x811c9dc5, stats.n), stats.m);
  for (let i = 0; i < mz; i++) h = mix(h, stats.termOfColumn[i]);
  for (let i = 0; i < stats.fixedIndex.length; i++) h = mix(h, stats.fixedIndex[i]);
  const K = stats.gram;
  for (let i = 0; i < mz; i++) for (let j = i; j < mz; j++) h = mix(h, K[i * stats.m + j] | 0);
  return h;
}

function mix(h: number, v: number): number {
  return Math.imul(h ^ v, 0x01000193) | 0;
}

/** Whether two trials have identical design blocks of the Gram matrix (and the same treatments in X). */
export function sameDesign(a: TrialStatistics, b: TrialStatistics): boolean {
  if (a.n !== b.n || a.m !== b.m || a.fixedIndex.length !== b.fixedIndex.length) return false;
  const m = a.m;
  const mz = m - 1;
  for (let i = 0; i < mz; i++) if (a.termOfColumn[i] !== b.termOfColumn[i]) return false;
  for (let i = 0; i < a.fixedIndex.length; i++) if (a.fixedIndex[i] !== b.fixedIndex[i]) return false;
  for (let i = 0; i < mz; i++) for (let j = i; j < mz; j++) if (a.gram[i * m + j] !== b.gram[i * m + j]) return false;
  return true;
}

/** Fills `out` with the shared part for a representative trial, term variances `termVariance[term]` and sigma2. */
export function evaluatePattern(stats: TrialStatistics, termVariance: ArrayLike<number>, sigma2: number, out: PatternState): void {
  const m = stats.m;
  const mz = m - 1;
  const K = stats.gram;
  const R = out.randomColumns;
  const r = R.length;
  const d = dScratch.get(r);
  for (let a = 0; a < r; a++) d[a] = Math.sqrt(Math.max(0, termVariance[stats.termOfColumn[R[a]]]));
  const mm = mScratch.get(r * r);
  for (let a = 0; a < r; a++) {
    const ka = R[a] * m;
    for (let b = 0; b < r; b++) mm[a * r + b] = d[a] * K[ka + R[b]] * d[b];
    mm[a * r + a] += sigma2;
  }
  const logDetM = choleskyInPlace(mm, r);
  const minv = invScratch.get(r * r);
  inverseFromCholesky(mm, r, minv, workScratch.get(r * r));
  const w = out.w;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) w[a * r + b] = d[a] * minv[a * r + b] * d[b];
  // K_ZR is an indicator Gram block, mostly zeros: list each design column's nonzero random
  // rows once and skip the zero products (adding them would not change any sum)
  const nz = nonzeroRandomRows(K, m, mz, R);
  const gz = out.gz;
  for (let i = 0; i < mz; i++) gzRow(K, i * m, R, nz, i, w, r, gz);
  const hzz = out.hzz;
  for (let i = 0; i < mz; i++) hzzRow(K, m, mz, i, gz, R, nz, sigma2, hzz);
  let trWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWK += w[a * r + b] * K[R[b] * m + R[a]];
  // tr(W K W K) = sum_ab (K W)_ab (K W)_ba over the random rows of gz
  let trWKWK = 0;
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) trWKWK += gz[R[a] * r + b] * gz[R[b] * r + a];
  out.sigma2 = sigma2;
  out.logDetM = logDetM;
  out.h2Ready = false;
  out.trWK = trWK;
  out.trWKWK = trWKWK;
}

interface NonzeroRows {
  /** For design column j, the positions b (into R) with K[R[b], j] != 0 are idx[start[j] .. start[j + 1]). */
  readonly start: Int32Array;
  readonly idx: Int32Array;
}

const nzStart = { buf: new Int32Array(64) };
const nzIdx = { buf: new Int32Array(256) };

function nonzeroRandomRows(K: Float64Array, m: number, mz: number, R: Int32Array): NonzeroRows {
  const r = R.length;
  if (nzStart.buf.length < mz + 1) nzStart.buf = new Int32Array(2 * (mz + 1));
  if (nzIdx.buf.length < mz * r) nzIdx.buf = new Int32Array(2 * mz * r);
  const start = nzStart.buf;
  const idx = nzIdx.buf;
  let n = 0;
  for (let j = 0; j < mz; j++) {
    start[j] = n;
    for (let b = 0; b < r; b++) if (K[R[b] * m + j] !== 0) idx[n++] = b;
  }
  start[mz] = n;
  return { start, idx };
}

/** gz[i, .] = K[i, R] W, summing over the nonzero K[i, R[a]] (K symmetric) in increasing a. */
function gzRow(K: Float64Array, ko: number, R: Int32Array, nz: NonzeroRows, i: number, w: Float64Array, r: number, gz: Float64Array): void {
  const R0 = nz.start[i];
  const R1 = nz.start[i + 1];
  const o = i * r;
  for (let b = 0; b < r; b++) {
    let s = 0;
    for (let e = R0; e < R1; e++) {
      const a = nz.idx[e];
      s += K[ko + R[a]] * w[a * r + b];
    }
    gz[o + b] = s;
  }
}

/** Row i of the design block of B'V^-1 B (upper part, mirrored): (K_ij - gz[i, .] K[R, j]) / sigma2. */
function hzzRow(K: Float64Array, m: number, mz: number, i: number, gz: Float64Array, R: Int32Array, nz: NonzeroRows, sigma2: number, hzz: Float64Array): void {
  const r = R.length;
  for (let j = i; j < mz; j++) {
    let s = K[i * m + j];
    const e1 = nz.start[j + 1];
    for (let e = nz.start[j]; e < e1; e++) {
      const b = nz.idx[e];
      s -= gz[i * r + b] * K[R[b] * m + j];
    }
    hzz[i * mz + j] = s / sigma2;
    hzz[j * mz + i] = s / sigma2;
  }
}

/** Design block of B'V^-2 B for a pattern: (hzz - gz hzz_R.) / sigma2, computed once per evaluation. */
export function ensurePatternH2(pat: PatternState, mz: number): Float64Array {
  const out = pat.h2zz;
  if (pat.h2Ready) return out;
  const R = pat.randomColumns;
  const r = R.length;
  for (let i = 0; i < mz; i++)
    for (let j = 0; j < mz; j++) {
      let v = pat.hzz[i * mz + j];
      for (let b = 0; b < r; b++) v -= pat.gz[i * r + b] * pat.hzz[R[b] * mz + j];
      out[i * mz + j] = v / pat.sigma2;
    }
  pat.h2Ready = true;
  return out;
}
