// A fast local maximiser of a likelihood in a few non-negative variances, for bootstrap refits
// that start next to the answer (the variances the data were drawn from): Newton steps with the
// gradient and Hessian by finite differences (one-sided at the zero boundary), components at zero
// held there while their slope points below zero, and a halving line search that only accepts a
// rise. Null when it does not settle; the caller then uses its global search.

export interface LocalMaximum {
  x: number[];
  value: number;
}

export function projectedNewton(f: (x: readonly number[]) => number, start: readonly number[], scale: number, maxIterations = 60): LocalMaximum | null {
  const dims = start.length;
  let x = start.map((v) => Math.max(0, v));
  let value = f(x);
  if (!Number.isFinite(value)) return null;
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    const h = x.map((v) => 1e-4 * (v + scale));
    const shifted = (moves: [number, number][]) => {
      const y = [...x];
      for (const [k, by] of moves) y[k] += by;
      return f(y);
    };
    // forward differences where a central one would step below zero
    const central = x.map((v, k) => v >= h[k]);
    const g = new Array<number>(dims);
    // f one step up each axis, reused by the cross differences below
    const up1 = new Array<number>(dims);
    const H: number[][] = Array.from({ length: dims }, () => new Array<number>(dims).fill(0));
    for (let k = 0; k < dims; k++) {
      if (central[k]) {
        const up = (up1[k] = shifted([[k, h[k]]]));
        const down = shifted([[k, -h[k]]]);
        g[k] = (up - down) / (2 * h[k]);
        H[k][k] = (up - 2 * value + down) / (h[k] * h[k]);
      } else {
        const one = (up1[k] = shifted([[k, h[k]]]));
        const two = shifted([[k, 2 * h[k]]]);
        g[k] = (-3 * value + 4 * one - two) / (2 * h[k]);
        H[k][k] = (value - 2 * one + two) / (h[k] * h[k]);
      }
    }
    for (let a = 0; a < dims; a++)
      for (let b = a + 1; b < dims; b++) {
        const ha = h[a];
        const hb = h[b];
        // forward in both: valid at the boundary too
        const fab = shifted([[a, ha], [b, hb]]);
        H[a][b] = H[b][a] = (fab - up1[a] - up1[b] + value) / (ha * hb);
      }
    const free = x.map((v, k) => !(v === 0 && g[k] <= 0));
    const idx = free.flatMap((on, k) => (on ? [k] : []));
    if (idx.length === 0) return { x, value };
    // settled: the free slopes are nil on the scale of the curvature
    if (idx.every((k) => Math.abs(g[k]) * Math.sqrt(1 / Math.max(1e-300, -H[k][k])) < 1e-6)) return { x, value };
    const step = newtonStep(idx.map((a) => idx.map((b) => H[a][b])), idx.map((k) => g[k]));
    const d = new Array<number>(dims).fill(0);
    idx.forEach((k, i) => (d[k] = step ? step[i] : g[k] / Math.max(1e-300, Math.abs(H[k][k]))));
    let accepted = false;
    for (let alpha = 1; alpha > 1e-10; alpha /= 2) {
      const y = x.map((v, k) => Math.max(0, v + alpha * d[k]));
      const fy = f(y);
      if (fy > value) {
        const moved = y.reduce((s, v, k) => s + Math.abs(v - x[k]), 0);
        x = y;
        value = fy;
        accepted = true;
        if (moved <= 1e-10 * scale) return { x, value };
        break;
      }
    }
    if (!accepted) return { x, value };
  }
  return null;
}

/** Solve (-H) d = g by Cholesky when -H is positive definite; null otherwise (the caller steps along the gradient). */
export function newtonStep(H: number[][], g: number[]): number[] | null {
  const n = g.length;
  const L: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let j = 0; j < n; j++) {
    let s = -H[j][j];
    for (let k = 0; k < j; k++) s -= L[j][k] * L[j][k];
    if (!(s > 0)) return null;
    L[j][j] = Math.sqrt(s);
    for (let i = j + 1; i < n; i++) {
      let t = -H[i][j];
      for (let k = 0; k < j; k++) t -= L[i][k] * L[j][k];
      L[i][j] = t / L[j][j];
    }
  }
  const z = new Array<number>(n);
  for (let i = 0; i < n; i++) {
    let s = g[i];
    for (let k = 0; k < i; k++) s -= L[i][k] * z[k];
    z[i] = s / L[i][i];
  }
  const d = new Array<number>(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = z[i];
    for (let k = i + 1; k < n; k++) s -= L[k][i] * d[k];
    d[i] = s / L[i][i];
  }
  return d;
}
