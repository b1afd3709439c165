// The AI Newton step ai[F,F] x = g without factoring the dense matrix, for models with many
// residual parameters (one per trial). The AI matrix is ai = A0 - V C V' (remlDerivatives.ts):
// in A0 a residual parameter meets only itself and the shared random-term parameters (each
// trial block holds one residual parameter), so A0 is an arrowhead matrix; V C V' = W W' has
// rank p (W = V L, C = L L'). With z = -W'x the system is the bordered one
//   [ A0  W ] [x]   [g]
//   [ W'  I ] [z] = [0],
// and eliminating the diagonal residual block leaves a small (shared + p) system M. The
// elimination's inertia shows M is positive definite exactly when ai[F,F] is (given the
// diagonal is positive), so its Cholesky factor doubles as the definiteness check the dense
// route makes. Cost O(n (s + p)^2) instead of O(n^3) for n residual parameters.
import { NotPositiveDefiniteError } from '../linalg/index.js';
import { choleskyInPlace } from '../linalg/inPlace.js';

export type BorderedOutcome = { readonly x: Float64Array } | { readonly notPositiveDefinite: true } | null;

/**
 * x with ai[F,F] x = g[F] (x and g indexed like `free`), ai = a0 - V C V'. `residual[k]` marks
 * residual parameters; a0 and `v` (nP x p) are as in ScoreAndInformation, `c` (p x p) as in Evaluation. Returns null when the
 * structure does not hold (a residual diagonal entry that is not positive), so the caller can
 * take the dense route.
 */
export function borderedSolve(a0: Float64Array, v: Float64Array, c: Float64Array, nP: number, p: number, free: readonly number[], residual: readonly boolean[], g: Float64Array): BorderedOutcome {
  const shared: number[] = [];
  const local: number[] = [];
  for (let i = 0; i < free.length; i++) (residual[free[i]] ? local : shared).push(i);
  const s = shared.length;
  const t = s + p;
  const w = lowRankFactor(v, c, nP, p);
  if (!w) return null;
  // d_i = A0 on the diagonal of the residual block; col_i = (A0[shared, i], W_i) its border
  const n = local.length;
  const d = new Float64Array(n);
  const border = new Float64Array(n * t);
  for (let r = 0; r < n; r++) {
    const k = free[local[r]];
    const dk = a0[k * nP + k];
    if (!(dk > 0)) return null;
    d[r] = dk;
    for (let a = 0; a < s; a++) {
      const j = free[shared[a]];
      border[r * t + a] = a0[j * nP + k];
    }
    for (let a = 0; a < p; a++) border[r * t + s + a] = w[k * p + a];
  }
  // M = [[E, W_S], [W_S', I]] - sum_i col_i col_i' / d_i ; rhs = [g_S; 0] - sum_i col_i g_i / d_i
  const m = new Float64Array(t * t);
  const rhs = new Float64Array(t);
  for (let a = 0; a < s; a++) {
    const ja = free[shared[a]];
    for (let b = 0; b < s; b++) {
      const jb = free[shared[b]];
      m[a * t + b] = a0[ja * nP + jb];
    }
    for (let b = 0; b < p; b++) {
      m[a * t + s + b] = w[ja * p + b];
      m[(s + b) * t + a] = w[ja * p + b];
    }
    rhs[a] = g[shared[a]];
  }
  for (let b = 0; b < p; b++) m[(s + b) * t + s + b] += 1;
  for (let r = 0; r < n; r++) eliminateLocal(m, rhs, border, r, t, d[r], g[local[r]]);
  try {
    choleskyInPlace(m, t);
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return { notPositiveDefinite: true };
    throw err;
  }
  const y = solveFactored(m, t, rhs);
  const x = new Float64Array(free.length);
  for (let a = 0; a < s; a++) x[shared[a]] = y[a];
  for (let r = 0; r < n; r++) {
    let sum = g[local[r]];
    for (let a = 0; a < t; a++) sum -= border[r * t + a] * y[a];
    x[local[r]] = sum / d[r];
  }
  return { x };
}

/** W = V L with C = L L' (nP x p); null if C is not positive definite. */
function lowRankFactor(v: Float64Array, c: Float64Array, nP: number, p: number): Float64Array | null {
  const l = Float64Array.from(c);
  try {
    choleskyInPlace(l, p);
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null;
    throw err;
  }
  const w = new Float64Array(nP * p);
  for (let k = 0; k < nP; k++)
    for (let a = 0; a < p; a++) {
      let sum = 0;
      for (let b = a; b < p; b++) sum += v[k * p + b] * l[b * p + a];
      w[k * p + a] = sum;
    }
  return w;
}

function eliminateLocal(m: Float64Array, rhs: Float64Array, border: Float64Array, r: number, t: number, d: number, gr: number): void {
  const o = r * t;
  for (let a = 0; a < t; a++) {
    const ca = border[o + a] / d;
    if (ca === 0) continue;
    rhs[a] -= ca * gr;
    for (let b = 0; b < t; b++) m[a * t + b] -= ca * border[o + b];
  }
}

/** Solve (L L') y = b with L in the lower triangle of l (t x t). */
function solveFactored(l: Float64Array, t: number, b: Float64Array): Float64Array {
  const y = Float64Array.from(b);
  for (let i = 0; i < t; i++) {
    let sum = y[i];
    for (let k = 0; k < i; k++) sum -= l[i * t + k] * y[k];
    y[i] = sum / l[i * t + i];
  }
  for (let i = t - 1; i >= 0; i--) {
    let sum = y[i];
    for (let k = i + 1; k < t; k++) sum -= l[k * t + i] * y[k];
    y[i] = sum / l[i * t + i];
  }
  return y;
}
