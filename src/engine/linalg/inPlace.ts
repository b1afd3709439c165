// In-place Cholesky of small symmetric positive-definite blocks on plain arrays, for the hot
// loops of the REML engines (one small block per design pattern or trial per evaluation), where
// allocation-free code matters more than the Matrix type's convenience.
import { NotPositiveDefiniteError } from './cholesky.js';

/** Overwrite the lower triangle of a (n x n, row-major) with L, A = L L'. Returns log det A. */
export function choleskyInPlace(a: Float64Array, n: number): number {
  let logDet = 0;
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= a[j * n + k] * a[j * n + k];
    if (!(d > 0)) throw new NotPositiveDefiniteError(j, d);
    const ljj = Math.sqrt(d);
    a[j * n + j] = ljj;
    logDet += 2 * Math.log(ljj);
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= a[i * n + k] * a[j * n + k];
      a[i * n + j] = s / ljj;
    }
  }
  return logDet;
}

/** A^-1 (full, symmetric) into `out` from the factor L held in the lower triangle of l. */
export function inverseFromCholesky(l: Float64Array, n: number, out: Float64Array, work: Float64Array): void {
  // work = L^-1 (lower)
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < j; i++) work[i * n + j] = 0;
    work[j * n + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let s = 0;
      for (let k = j; k < i; k++) s -= l[i * n + k] * work[k * n + j];
      work[i * n + j] = s / l[i * n + i];
    }
  }
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < n; k++) s += work[k * n + i] * work[k * n + j];
      out[i * n + j] = s;
      out[j * n + i] = s;
    }
}
