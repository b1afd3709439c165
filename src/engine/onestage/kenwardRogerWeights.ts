// W = 2 E^-1, the asymptotic covariance of the variance parameters that Kenward–Roger uses
// (pbkrtest's vcovAdj keeps every parameter; if E is singular, those at zero are dropped).
// Kenward–Roger reads W through two questions only: single entries W_kl for pairs that act in one
// trial block (its Q_kl sum) and products W X (its P_k C P_l sum and the contrast's A1), so W is
// never formed when it need not be. With one residual per trial E is an arrowhead plus a low-rank
// part (secondOrder.ts), E = Delta + U U', and both questions are answered through the bordered
// system
//   [ Delta  U ] [x]   [g]
//   [ U'    -I ] [z] = [0]        (z = U'x, so (Delta + U U') x = g),
// eliminating the diagonal residual block and solving the small rest by LU (it is not definite).
import { cholesky, cholInverse, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { SecondOrder } from './secondOrder.js';
import { BORDERED_MIN_FREE } from './informationSolver.js';

export interface KenwardRogerWeights {
  /** The parameters kept (all, or those not at zero when E is singular with them). */
  readonly index: readonly number[];
  /** W_kl (0 when k or l is not kept). */
  entry(k: number, l: number): number;
  /** W X for X with m columns over all parameters (nP x m, row-major); rows of parameters not kept are 0. */
  apply(x: Float64Array, m: number): Float64Array;
}

export function kenwardRogerWeights(so: SecondOrder, atZero: readonly boolean[], sharedParameters: number): KenwardRogerWeights {
  const nP = so.p.length;
  const all = Array.from({ length: nP }, (_, k) => k);
  const kept = all.filter((k) => !atZero[k]);
  if (nP <= BORDERED_MIN_FREE || sharedParameters >= nP) {
    const w = denseWeights(so, all) ?? denseWeights(so, kept);
    if (!w) throw new Error('Kenward–Roger: the expected information of the variance parameters is singular');
    return w;
  }
  const w = borderedWeights(so, all, sharedParameters) ?? borderedWeights(so, kept, sharedParameters);
  if (!w) throw new Error('Kenward–Roger: the expected information of the variance parameters is singular');
  return w;
}

/** W from the dense inverse of E on `index`; null when E is not positive definite there. */
export function denseWeights(so: SecondOrder, index: readonly number[]): KenwardRogerWeights | null {
  const nP = so.p.length;
  const f = index.length;
  const e = so.expected;
  const m: Matrix = { rows: f, cols: f, data: new Float64Array(f * f) };
  for (let i = 0; i < f; i++) for (let j = 0; j < f; j++) m.data[i * f + j] = e[index[i] * nP + index[j]];
  let inv: Float64Array;
  try {
    inv = cholInverse(cholesky(m)).data;
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null;
    throw err;
  }
  const w = new Float64Array(nP * nP);
  for (let i = 0; i < f; i++) for (let j = 0; j < f; j++) w[index[i] * nP + index[j]] = 2 * inv[i * f + j];
  return {
    index,
    entry: (k, l) => w[k * nP + l],
    apply: (x, cols) => {
      const out = new Float64Array(nP * cols);
      for (let k = 0; k < nP; k++)
        for (let l = 0; l < nP; l++) {
          const wkl = w[k * nP + l];
          if (wkl === 0) continue;
          for (let c = 0; c < cols; c++) out[k * cols + c] += wkl * x[l * cols + c];
        }
      return out;
    },
  };
}

/** W through the bordered system on `index`; null when E is singular there. */
export function borderedWeights(so: SecondOrder, index: readonly number[], sharedParameters: number): KenwardRogerWeights | null {
  const nP = so.p.length;
  const delta = so.blockExpected;
  const q = so.uCols;
  const shared = index.filter((k) => k < sharedParameters);
  const local = index.filter((k) => k >= sharedParameters);
  const s = shared.length;
  const t = s + q;
  const n = local.length;
  let scale = 0;
  for (const k of index) scale = Math.max(scale, Math.abs(delta.get(k, k)));
  const d = new Float64Array(n);
  const border = new Float64Array(n * t);
  for (let r = 0; r < n; r++) {
    const k = local[r];
    d[r] = delta.get(k, k);
    if (!(Math.abs(d[r]) > 1e-13 * scale)) return null;
    for (let a = 0; a < s; a++) border[r * t + a] = delta.get(shared[a], k);
    for (let a = 0; a < q; a++) border[r * t + s + a] = so.u[k * q + a];
  }
  // M = [[Delta_SS, U_S], [U_S', -I]] - sum_i col_i col_i' / d_i
  const m = new Float64Array(t * t);
  for (let a = 0; a < s; a++) {
    for (let b = 0; b < s; b++) m[a * t + b] = delta.get(shared[a], shared[b]);
    for (let b = 0; b < q; b++) {
      m[a * t + s + b] = so.u[shared[a] * q + b];
      m[(s + b) * t + a] = so.u[shared[a] * q + b];
    }
  }
  for (let b = 0; b < q; b++) m[(s + b) * t + s + b] -= 1;
  for (let r = 0; r < n; r++)
    for (let a = 0; a < t; a++) {
      const ca = border[r * t + a] / d[r];
      if (ca === 0) continue;
      for (let b = 0; b < t; b++) m[a * t + b] -= ca * border[r * t + b];
    }
  const lu = luFactor(m, t);
  if (!lu) return null;
  const position = new Int32Array(nP).fill(-1);
  index.forEach((k, i) => (position[k] = i));
  // E^-1 g for g over the kept parameters (in `index` order)
  const solve = (g: Float64Array): Float64Array => {
    const rhs = new Float64Array(t);
    for (let a = 0; a < s; a++) rhs[a] = g[position[shared[a]]];
    for (let r = 0; r < n; r++) {
      const gr = g[position[local[r]]] / d[r];
      if (gr === 0) continue;
      for (let a = 0; a < t; a++) rhs[a] -= border[r * t + a] * gr;
    }
    const y = luSolve(lu, t, rhs);
    const x = new Float64Array(index.length);
    for (let a = 0; a < s; a++) x[position[shared[a]]] = y[a];
    for (let r = 0; r < n; r++) {
      let sum = g[position[local[r]]];
      for (let a = 0; a < t; a++) sum -= border[r * t + a] * y[a];
      x[position[local[r]]] = sum / d[r];
    }
    return x;
  };
  // the shared parameters' columns of W, and each residual's diagonal 2 (1/d + col'M^-1 col / d^2)
  const sharedColumns = shared.map((k) => {
    const e = new Float64Array(index.length);
    e[position[k]] = 1;
    return solve(e);
  });
  const localDiagonal = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    const col = border.subarray(r * t, (r + 1) * t);
    const mc = luSolve(lu, t, col);
    let quad = 0;
    for (let a = 0; a < t; a++) quad += col[a] * mc[a];
    localDiagonal[r] = 1 / d[r] + quad / (d[r] * d[r]);
  }
  const sharedPosition = new Int32Array(nP).fill(-1);
  shared.forEach((k, a) => (sharedPosition[k] = a));
  const localPosition = new Int32Array(nP).fill(-1);
  local.forEach((k, r) => (localPosition[k] = r));
  return {
    index,
    entry: (k, l) => {
      if (position[k] < 0 || position[l] < 0) return 0;
      if (sharedPosition[k] >= 0) return 2 * sharedColumns[sharedPosition[k]][position[l]];
      if (sharedPosition[l] >= 0) return 2 * sharedColumns[sharedPosition[l]][position[k]];
      if (k === l) return 2 * localDiagonal[localPosition[k]];
      const e = new Float64Array(index.length);
      e[position[l]] = 1;
      return 2 * solve(e)[position[k]];
    },
    apply: (x, cols) => {
      const out = new Float64Array(nP * cols);
      const g = new Float64Array(index.length);
      for (let c = 0; c < cols; c++) {
        index.forEach((k, i) => (g[i] = x[k * cols + c]));
        const y = solve(g);
        index.forEach((k, i) => (out[k * cols + c] = 2 * y[i]));
      }
      return out;
    },
  };
}

interface LuFactor {
  readonly a: Float64Array;
  readonly pivot: Int32Array;
}

/** LU with partial pivoting of a (t x t, copied); null when a pivot vanishes (singular to rounding). */
function luFactor(m: Float64Array, t: number): LuFactor | null {
  const a = Float64Array.from(m);
  const pivot = new Int32Array(t);
  let scale = 0;
  for (let i = 0; i < t * t; i++) scale = Math.max(scale, Math.abs(a[i]));
  for (let j = 0; j < t; j++) {
    let p = j;
    for (let i = j + 1; i < t; i++) if (Math.abs(a[i * t + j]) > Math.abs(a[p * t + j])) p = i;
    pivot[j] = p;
    if (!(Math.abs(a[p * t + j]) > 1e-13 * scale)) return null;
    if (p !== j) for (let c = 0; c < t; c++) [a[j * t + c], a[p * t + c]] = [a[p * t + c], a[j * t + c]];
    for (let i = j + 1; i < t; i++) {
      const f = (a[i * t + j] /= a[j * t + j]);
      if (f === 0) continue;
      for (let c = j + 1; c < t; c++) a[i * t + c] -= f * a[j * t + c];
    }
  }
  return { a, pivot };
}

function luSolve(lu: LuFactor, t: number, b: ArrayLike<number>): Float64Array {
  const { a, pivot } = lu;
  const y = Float64Array.from(b);
  // the row interchanges in order (whole rows were swapped while factoring), then L, then U
  for (let j = 0; j < t; j++) {
    const p = pivot[j];
    if (p !== j) [y[j], y[p]] = [y[p], y[j]];
  }
  for (let j = 0; j < t; j++) for (let i = j + 1; i < t; i++) y[i] -= a[i * t + j] * y[j];
  for (let i = t - 1; i >= 0; i--) {
    let sum = y[i];
    for (let c = i + 1; c < t; c++) sum -= a[i * t + c] * y[c];
    y[i] = sum / a[i * t + i];
  }
  return y;
}
