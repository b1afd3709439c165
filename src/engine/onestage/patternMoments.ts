// Data moments of a design pattern. Every per-trial quantity the REML iterations need is a
// quadratic polynomial in the trial's data: a multiple of y'y plus a quadratic form in
// v = (Z'y, 1). Summed over the trials of a pattern it therefore depends on the data only through
//   sum of y'y,  sum of v,  S = sum of v v'.
// Factoring S = F F' (pivoted Cholesky, at most m columns) turns the sum over any number of
// trials into a sum over F's columns ("pseudo-trials" whose last coordinate c replaces the 1).
// A pattern with few trials keeps the trials' own vectors as its columns.
import type { TrialStatistics } from './sufficientStatistics.js';

export interface PatternMoments {
  /** Column vectors (u = Z'y over the design columns, then c), each of length m; row-major. */
  readonly columns: Float64Array;
  readonly nColumns: number;
  /** Sum of the trials' v = (Z'y, 1): the last entry is the number of trials. */
  readonly sum: Float64Array;
  readonly sumYy: number;
}

/** The trial's v = (Z'y, 1) into out[o ...]. */
function dataVectorInto(t: TrialStatistics, out: Float64Array, o: number): void {
  const m = t.m;
  const mz = m - 1;
  for (let j = 0; j < mz; j++) out[o + j] = t.gram[j * m + mz];
  out[o + mz] = 1;
}

export function patternMoments(trials: readonly TrialStatistics[]): PatternMoments {
  const m = trials[0].m;
  const mz = m - 1;
  const sum = new Float64Array(m);
  let sumYy = 0;
  for (const t of trials) {
    sumYy += t.gram[m * m - 1];
    for (let j = 0; j < mz; j++) sum[j] += t.gram[j * m + mz];
    sum[mz] += 1;
  }
  if (trials.length <= m) {
    const columns = new Float64Array(trials.length * m);
    trials.forEach((t, i) => dataVectorInto(t, columns, i * m));
    return { columns, nColumns: trials.length, sum, sumYy };
  }
  const s = new Float64Array(m * m);
  const v = new Float64Array(m);
  for (const t of trials) {
    dataVectorInto(t, v, 0);
    addOuter(s, v, m);
  }
  for (let a = 0; a < m; a++) for (let b = 0; b < a; b++) s[a * m + b] = s[b * m + a];
  const cols = pivotedCholesky(s, m);
  return { columns: cols.data, nColumns: cols.rank, sum, sumYy };
}

/** s += v v' (upper triangle, then mirrored: the same sums in the same order either way). */
function addOuter(s: Float64Array, v: Float64Array, m: number): void {
  for (let a = 0; a < m; a++) {
    const va = v[a];
    for (let b = a; b < m; b++) s[a * m + b] += va * v[b];
  }
}

/** Columns f_k with sum_k f_k f_k' = S for a positive semi-definite S (outer-product form). */
function pivotedCholesky(s: Float64Array, m: number): { data: Float64Array; rank: number } {
  const a = Float64Array.from(s);
  const out: number[] = [];
  let maxDiag = 0;
  for (let i = 0; i < m; i++) maxDiag = Math.max(maxDiag, a[i * m + i]);
  let rank = 0;
  for (let k = 0; k < m; k++) {
    let piv = -1;
    let best = 1e-15 * maxDiag;
    for (let i = 0; i < m; i++)
      if (a[i * m + i] > best) {
        best = a[i * m + i];
        piv = i;
      }
    if (piv < 0) break;
    const root = Math.sqrt(best);
    const col = new Float64Array(m);
    for (let i = 0; i < m; i++) col[i] = a[i * m + piv] / root;
    for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) a[i * m + j] -= col[i] * col[j];
    for (const x of col) out.push(x);
    rank++;
  }
  return { data: Float64Array.from(out), rank };
}
