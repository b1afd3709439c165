// Cholesky factorisation of symmetric positive-definite matrices and what follows from it:
// solves, inverse, log-determinant.
import { Matrix, zeros, clone } from './matrix.js';

export class NotPositiveDefiniteError extends Error {
  constructor(readonly pivot: number, readonly value: number) {
    super(`matrix is not positive definite (pivot ${pivot} = ${value})`);
  }
}

/** Lower-triangular L with A = L L'. Throws NotPositiveDefiniteError. */
export function cholesky(a: Matrix): Matrix {
  const n = a.rows;
  if (a.cols !== n) throw new Error('cholesky: matrix is not square');
  const l = zeros(n, n);
  const L = l.data;
  const A = a.data;
  for (let j = 0; j < n; j++) {
    let d = A[j * n + j];
    for (let k = 0; k < j; k++) d -= L[j * n + k] * L[j * n + k];
    if (!(d > 0)) throw new NotPositiveDefiniteError(j, d);
    const ljj = Math.sqrt(d);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = A[i * n + j];
      for (let k = 0; k < j; k++) s -= L[i * n + k] * L[j * n + k];
      L[i * n + j] = s / ljj;
    }
  }
  return l;
}

/** Solve L x = b in place (L lower triangular). */
export function forwardSolveInPlace(l: Matrix, b: Float64Array): Float64Array {
  const n = l.rows;
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l.data[i * n + k] * b[k];
    b[i] = s / l.data[i * n + i];
  }
  return b;
}

/** Solve L' x = b in place (L lower triangular). */
export function backSolveTransposeInPlace(l: Matrix, b: Float64Array): Float64Array {
  const n = l.rows;
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < n; k++) s -= l.data[k * n + i] * b[k];
    b[i] = s / l.data[i * n + i];
  }
  return b;
}

/** Solve A x = b given the Cholesky factor L of A. */
export function cholSolve(l: Matrix, b: ArrayLike<number>): Float64Array {
  const x = Float64Array.from(b);
  forwardSolveInPlace(l, x);
  return backSolveTransposeInPlace(l, x);
}

/** Solve A X = B column by column given L. */
export function cholSolveMatrix(l: Matrix, b: Matrix): Matrix {
  const out = zeros(b.rows, b.cols);
  const col = new Float64Array(b.rows);
  for (let j = 0; j < b.cols; j++) {
    for (let i = 0; i < b.rows; i++) col[i] = b.data[i * b.cols + j];
    forwardSolveInPlace(l, col);
    backSolveTransposeInPlace(l, col);
    for (let i = 0; i < b.rows; i++) out.data[i * b.cols + j] = col[i];
  }
  return out;
}

/** A^{-1} from its Cholesky factor. */
export function cholInverse(l: Matrix): Matrix {
  const n = l.rows;
  // Invert L (lower), then A^{-1} = L^{-T} L^{-1}.
  const li = zeros(n, n);
  for (let j = 0; j < n; j++) {
    li.data[j * n + j] = 1 / l.data[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let s = 0;
      for (let k = j; k < i; k++) s -= l.data[i * n + k] * li.data[k * n + j];
      li.data[i * n + j] = s / l.data[i * n + i];
    }
  }
  const inv = zeros(n, n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < n; k++) s += li.data[k * n + i] * li.data[k * n + j];
      inv.data[i * n + j] = s;
      inv.data[j * n + i] = s;
    }
  return inv;
}

/** log det A from its Cholesky factor. */
export function cholLogDet(l: Matrix): number {
  let s = 0;
  for (let i = 0; i < l.rows; i++) s += Math.log(l.data[i * l.cols + i]);
  return 2 * s;
}

/** Inverse of a symmetric positive-definite matrix. */
export function spdInverse(a: Matrix): Matrix {
  return cholInverse(cholesky(a));
}

/** Copy with `jitter` added to the diagonal. */
export function addDiagonal(a: Matrix, jitter: number): Matrix {
  const c = clone(a);
  for (let i = 0; i < a.rows; i++) c.data[i * a.cols + i] += jitter;
  return c;
}
