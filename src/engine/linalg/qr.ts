// Householder QR with limited column pivoting: columns keep their order unless one is
// (numerically) a combination of earlier columns, in which case it is moved to the end and
// reported as aliased. This is the pivoting rule of LINPACK's dqrdc2 as used by R's lm, so
// which term is declared aliased agrees with what users see there.
import { Matrix, zeros } from './matrix.js';

export interface QrFactor {
  /** Number of rows and columns of the factored matrix. */
  readonly n: number;
  readonly p: number;
  /** Numerical rank. */
  readonly rank: number;
  /** Column order after pivoting: pivot[k] is the original index of factored column k. */
  readonly pivot: readonly number[];
  /** Householder vectors below the diagonal and R on and above it (n x p, row-major). */
  readonly qr: Matrix;
  /** Scalars of the Householder reflections. */
  readonly tau: Float64Array;
}

/** Default relative tolerance for declaring a column aliased (as in R's lm). */
export const QR_TOLERANCE = 1e-7;

export function qrFactor(x: Matrix, tolerance = QR_TOLERANCE): QrFactor {
  const n = x.rows;
  const p = x.cols;
  // Work column-major for cache-friendly Householder sweeps.
  const a = new Float64Array(n * p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) a[j * n + i] = x.data[i * p + j];
  const pivot = Array.from({ length: p }, (_, j) => j);
  const originalNorm = new Float64Array(p);
  for (let j = 0; j < p; j++) originalNorm[j] = columnNorm(a, n, j, 0);
  const tau = new Float64Array(p);
  let rank = p;
  let k = 0;
  while (k < rank) {
    const norm = columnNorm(a, n, k, k);
    const ref = originalNorm[pivot[k]];
    if (k < n && norm > tolerance * (ref === 0 ? 1 : ref) && norm > 0) {
      householderStep(a, n, p, k, norm, tau);
      k++;
    } else {
      // Move column k to the end; columns after it shift left (dqrdc2 behaviour).
      rotateColumnToEnd(a, n, p, k, pivot);
      rank--;
    }
  }
  const qr = zeros(n, p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) qr.data[i * p + j] = a[j * n + i];
  return { n, p, rank, pivot, qr, tau };
}

function columnNorm(a: Float64Array, n: number, j: number, from: number): number {
  let s = 0;
  const o = j * n;
  let scale = 0;
  for (let i = from; i < n; i++) scale = Math.max(scale, Math.abs(a[o + i]));
  if (scale === 0) return 0;
  for (let i = from; i < n; i++) {
    const v = a[o + i] / scale;
    s += v * v;
  }
  return scale * Math.sqrt(s);
}

function householderStep(a: Float64Array, n: number, p: number, k: number, norm: number, tau: Float64Array): void {
  const o = k * n;
  const alpha = a[o + k] >= 0 ? -norm : norm;
  // v = x - alpha e1, normalised so that v[0] = 1.
  const v0 = a[o + k] - alpha;
  for (let i = k + 1; i < n; i++) a[o + i] /= v0;
  tau[k] = -v0 / alpha;
  a[o + k] = alpha;
  for (let j = k + 1; j < p; j++) {
    const oj = j * n;
    let s = a[oj + k];
    for (let i = k + 1; i < n; i++) s += a[o + i] * a[oj + i];
    s *= tau[k];
    a[oj + k] -= s;
    for (let i = k + 1; i < n; i++) a[oj + i] -= s * a[o + i];
  }
}

function rotateColumnToEnd(a: Float64Array, n: number, p: number, k: number, pivot: number[]): void {
  const saved = a.slice(k * n, (k + 1) * n);
  for (let j = k; j < p - 1; j++) a.copyWithin(j * n, (j + 1) * n, (j + 2) * n);
  a.set(saved, (p - 1) * n);
  const pk = pivot[k];
  for (let j = k; j < p - 1; j++) pivot[j] = pivot[j + 1];
  pivot[p - 1] = pk;
}

/** Q' y for the factored matrix. */
export function qtMultiply(f: QrFactor, y: ArrayLike<number>): Float64Array {
  const { n, p } = f;
  const out = Float64Array.from(y);
  const q = f.qr.data;
  for (let k = 0; k < Math.min(f.rank, n); k++) {
    let s = out[k];
    for (let i = k + 1; i < n; i++) s += q[i * p + k] * out[i];
    s *= f.tau[k];
    out[k] -= s;
    for (let i = k + 1; i < n; i++) out[i] -= s * q[i * p + k];
  }
  return out;
}

/** Q z for the factored matrix (z of length n). */
export function qMultiply(f: QrFactor, z: ArrayLike<number>): Float64Array {
  const { n, p } = f;
  const out = Float64Array.from(z);
  const q = f.qr.data;
  for (let k = Math.min(f.rank, n) - 1; k >= 0; k--) {
    let s = out[k];
    for (let i = k + 1; i < n; i++) s += q[i * p + k] * out[i];
    s *= f.tau[k];
    out[k] -= s;
    for (let i = k + 1; i < n; i++) out[i] -= s * q[i * p + k];
  }
  return out;
}

/** The leading rank x rank block of R (upper triangular), in pivoted column order. */
export function rFactor(f: QrFactor): Matrix {
  const r = zeros(f.rank, f.rank);
  for (let i = 0; i < f.rank; i++) for (let j = i; j < f.rank; j++) r.data[i * f.rank + j] = f.qr.data[i * f.p + j];
  return r;
}

/** Inverse of the upper-triangular R1 (rank x rank). */
export function rInverse(f: QrFactor): Matrix {
  const k = f.rank;
  const r = rFactor(f);
  const inv = zeros(k, k);
  for (let j = k - 1; j >= 0; j--) {
    inv.data[j * k + j] = 1 / r.data[j * k + j];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let m = i + 1; m <= j; m++) s += r.data[i * k + m] * inv.data[m * k + j];
      inv.data[i * k + j] = -s / r.data[i * k + i];
    }
  }
  return inv;
}

/**
 * (X'X)^- restricted to the estimable (non-aliased) columns: a p x p matrix in the
 * original column order with zeros for aliased columns — the unscaled covariance of the
 * least-squares coefficients with aliased ones set to zero.
 */
export function unscaledCovariance(f: QrFactor): Matrix {
  const k = f.rank;
  const ri = rInverse(f);
  const out = zeros(f.p, f.p);
  for (let a = 0; a < k; a++)
    for (let b = 0; b < k; b++) {
      let s = 0;
      for (let m = Math.max(a, b); m < k; m++) s += ri.data[a * k + m] * ri.data[b * k + m];
      out.data[f.pivot[a] * f.p + f.pivot[b]] = s;
    }
  return out;
}

/** Least-squares coefficients in the original column order; aliased columns get NaN. */
export function qrCoefficients(f: QrFactor, y: ArrayLike<number>): Float64Array {
  const qty = qtMultiply(f, y);
  const k = f.rank;
  const b = new Float64Array(k);
  for (let i = k - 1; i >= 0; i--) {
    let s = qty[i];
    for (let j = i + 1; j < k; j++) s -= f.qr.data[i * f.p + j] * b[j];
    b[i] = s / f.qr.data[i * f.p + i];
  }
  const out = new Float64Array(f.p).fill(NaN);
  for (let i = 0; i < k; i++) out[f.pivot[i]] = b[i];
  return out;
}

/** Aliased (dropped) original column indices. */
export function aliasedColumns(f: QrFactor): number[] {
  return f.pivot.slice(f.rank).slice().sort((a, b) => a - b);
}
