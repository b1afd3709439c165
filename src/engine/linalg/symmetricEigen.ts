// Eigen-decomposition of a small symmetric matrix by the cyclic Jacobi method (Golub & Van Loan,
// Matrix Computations, 4th ed., §8.5): plane rotations annihilate the off-diagonal entries one by
// one until they are negligible. Jacobi is slower than tridiagonal QR for large matrices but for
// the few-dozen-square blocks of a trial's random effects it is short, allocation-free and
// accurate to a few units of rounding relative to the matrix's norm, also for zero eigenvalues.

const MAX_SWEEPS = 60;

/**
 * a (n x n, row-major, symmetric) = Q diag(values) Q'. On return `values` holds the eigenvalues
 * and `vectors` the eigenvectors as columns (vectors[b * n + a] is entry b of vector a); `a` is
 * overwritten.
 */
export function symmetricEigenInPlace(a: Float64Array, n: number, values: Float64Array, vectors: Float64Array): void {
  for (let i = 0; i < n * n; i++) vectors[i] = 0;
  for (let i = 0; i < n; i++) vectors[i * n + i] = 1;
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale += a[i] * a[i];
  const tolerance = 1e-34 * scale; // squared off-diagonal mass at which rotations stop mattering
  for (let sweep = 0; sweep < MAX_SWEEPS; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off += a[p * n + q] * a[p * n + q];
    if (off <= tolerance) break;
    for (let p = 0; p < n - 1; p++) for (let q = p + 1; q < n; q++) rotate(a, n, vectors, p, q);
  }
  for (let i = 0; i < n; i++) values[i] = a[i * n + i];
}

/** One Jacobi rotation in the (p, q) plane that zeroes a[p, q] (stable form of the angle). */
function rotate(a: Float64Array, n: number, v: Float64Array, p: number, q: number): void {
  const apq = a[p * n + q];
  if (apq === 0) return;
  const app = a[p * n + p];
  const aqq = a[q * n + q];
  const theta = (aqq - app) / (2 * apq);
  const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
  const c = 1 / Math.sqrt(t * t + 1);
  const s = t * c;
  a[p * n + p] = app - t * apq;
  a[q * n + q] = aqq + t * apq;
  a[p * n + q] = 0;
  a[q * n + p] = 0;
  for (let k = 0; k < n; k++) {
    if (k !== p && k !== q) {
      const akp = a[k * n + p];
      const akq = a[k * n + q];
      const np = c * akp - s * akq;
      const nq = s * akp + c * akq;
      a[k * n + p] = np;
      a[p * n + k] = np;
      a[k * n + q] = nq;
      a[q * n + k] = nq;
    }
    const vkp = v[k * n + p];
    const vkq = v[k * n + q];
    v[k * n + p] = c * vkp - s * vkq;
    v[k * n + q] = s * vkp + c * vkq;
  }
}
