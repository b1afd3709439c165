// In-place dense helpers on row-major Float64Array squares, for the small blocks of the crossed
// fit (a trial's plots, a site's effects, the year-and-fixed border).

/** Lower Cholesky factor of the n x n matrix a, in place (upper part left as is); false if not positive definite. */
export function choleskyInPlace(a: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= a[j * n + k] * a[j * n + k];
    if (!(d > 0)) return false;
    const ljj = Math.sqrt(d);
    a[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= a[i * n + k] * a[j * n + k];
      a[i * n + j] = s / ljj;
    }
  }
  return true;
}

/** Solve L X = B for the n x c matrix B (row-major, in place), L the lower factor in l (n x n). */
export function forwardSolveColumns(l: Float64Array, n: number, b: Float64Array, c: number): void {
  for (let i = 0; i < n; i++) {
    const lii = l[i * n + i];
    for (let k = 0; k < i; k++) {
      const lik = l[i * n + k];
      if (lik === 0) continue;
      for (let j = 0; j < c; j++) b[i * c + j] -= lik * b[k * c + j];
    }
    for (let j = 0; j < c; j++) b[i * c + j] /= lii;
  }
}

/** Solve L x = b (first n entries of b, the factor's leading n x n part of an N x N square). */
export function forwardSolve(l: Float64Array, N: number, n: number, b: Float64Array): void {
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i * N + k] * b[k];
    b[i] = s / l[i * N + i];
  }
}

/** Solve L' x = b (leading n x n part of an N x N lower factor). */
export function backSolveTranspose(l: Float64Array, N: number, n: number, b: Float64Array): void {
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < n; k++) s -= l[k * N + i] * b[k];
    b[i] = s / l[i * N + i];
  }
}

/** Solve H s = g by Cholesky; null when H is not positive definite. */
export function solveSymmetric(H: Float64Array, g: Float64Array, n: number): Float64Array | null {
  const l = Float64Array.from(H);
  for (let j = 0; j < n; j++) {
    let d = l[j * n + j];
    for (let k = 0; k < j; k++) d -= l[j * n + k] ** 2;
    if (!(d > 0)) return null;
    l[j * n + j] = Math.sqrt(d);
    for (let i = j + 1; i < n; i++) {
      let s = l[i * n + j];
      for (let k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
      l[i * n + j] = s / l[j * n + j];
    }
  }
  const s = Float64Array.from(g);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < i; k++) s[i] -= l[i * n + k] * s[k];
    s[i] /= l[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    for (let k = i + 1; k < n; k++) s[i] -= l[k * n + i] * s[k];
    s[i] /= l[i * n + i];
  }
  return s;
}
