// What the inference needs from the inverse of a (free-parameter) information matrix is its
// diagonal (standard errors) and quadratic forms g'A^-1 g (Satterthwaite); both come from the
// Cholesky factor without forming the full inverse, which with one residual per trial is a
// few-hundred-square matrix.
import { cholesky, forwardSolveInPlace, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';

/** Cholesky factor of the principal submatrix of a (n x n) on idx; null when not positive definite. */
export function subCholesky(a: Float64Array, n: number, idx: readonly number[]): Matrix | null {
  const f = idx.length;
  const m: Matrix = { rows: f, cols: f, data: new Float64Array(f * f) };
  for (let i = 0; i < f; i++) {
    const row = idx[i] * n;
    for (let j = 0; j < f; j++) m.data[i * f + j] = a[row + idx[j]];
  }
  try {
    return cholesky(m);
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null;
    throw err;
  }
}

/** diag(A^-1) from L (A = L L'): (A^-1)_jj = |L^-1 e_j|^2. */
export function inverseDiagonal(l: Matrix): Float64Array {
  const n = l.rows;
  const out = new Float64Array(n);
  const y = new Float64Array(n);
  for (let j = 0; j < n; j++) out[j] = unitSolveNorm(l.data, n, j, y);
  return out;
}

/** |L^-1 e_j|^2: forward substitution starting at row j (the entries above are zero). */
function unitSolveNorm(l: Float64Array, n: number, j: number, y: Float64Array): number {
  let norm = 0;
  for (let i = j; i < n; i++) {
    let s = i === j ? 1 : 0;
    for (let k = j; k < i; k++) s -= l[i * n + k] * y[k];
    const v = s / l[i * n + i];
    y[i] = v;
    norm += v * v;
  }
  return norm;
}

/** g'A^-1 g = |L^-1 g|^2. */
export function inverseQuadratic(l: Matrix, g: ArrayLike<number>): number {
  const y = Float64Array.from(g);
  forwardSolveInPlace(l, y);
  let s = 0;
  for (let i = 0; i < y.length; i++) s += y[i] * y[i];
  return s;
}
