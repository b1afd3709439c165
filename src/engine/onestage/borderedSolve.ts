// Solves with the information matrices of models with many residual parameters (one per trial)
// without factoring them densely. Each such matrix is A = Delta - Y Y' on the free parameters:
// in Delta a residual parameter meets only itself and the shared random-term parameters (each
// trial block holds one residual parameter), so Delta is an arrowhead matrix; Y has few columns
// (the AI matrix: Y = V L with C = L L'; the observed information: also the vech of L'P_k L, see
// secondOrder.ts). With z = -Y'x the system A x = g is the bordered one
//   [ Delta  Y ] [x]   [g]
//   [ Y'     I ] [z] = [0],
// and eliminating the diagonal residual block leaves a small (shared + q) matrix M. Inertia
// (Sylvester) shows M is positive definite exactly when A is (given the residual diagonal is
// positive), so M's Cholesky factor doubles as the definiteness check a dense factor makes.
// Cost O(n (s + q)^2) instead of O(n^3) for n residual parameters.
import { NotPositiveDefiniteError } from '../linalg/index.js';
import { choleskyInPlace } from '../linalg/inPlace.js';
import type { SymmetricArrowhead } from './arrowhead.js';

export type BorderedOutcome = BorderedFactor | { readonly notPositiveDefinite: true } | null;

export class BorderedFactor {
  constructor(
    private readonly shared: readonly number[],
    private readonly local: readonly number[],
    /** Residual diagonal of Delta (per local parameter) and each one's border row (t = s + q). */
    private readonly d: Float64Array,
    private readonly border: Float64Array,
    /** Cholesky factor of M (t x t, lower triangle). */
    private readonly m: Float64Array,
    private readonly t: number,
  ) {}

  /** x with A x = g (x and g indexed like `free`). */
  solve(g: ArrayLike<number>): Float64Array {
    const { shared, local, d, border, t } = this;
    const s = shared.length;
    // rhs = [g_S; 0] - sum_i col_i g_i / d_i
    const rhs = new Float64Array(t);
    for (let a = 0; a < s; a++) rhs[a] = g[shared[a]];
    for (let r = 0; r < local.length; r++) {
      const gr = g[local[r]] / d[r];
      if (gr === 0) continue;
      for (let a = 0; a < t; a++) rhs[a] -= border[r * t + a] * gr;
    }
    const y = solveFactored(this.m, t, rhs);
    const x = new Float64Array(s + local.length);
    for (let a = 0; a < s; a++) x[shared[a]] = y[a];
    for (let r = 0; r < local.length; r++) {
      let sum = g[local[r]];
      for (let a = 0; a < t; a++) sum -= border[r * t + a] * y[a];
      x[local[r]] = sum / d[r];
    }
    return x;
  }

  /**
   * diag(A^-1): for a shared parameter (M^-1)_aa; for a local one 1/d + |L_M^-1 col|^2 / d^2
   * (A^-1 e_j through the elimination above).
   */
  inverseDiagonal(): Float64Array {
    const { shared, local, d, border, t } = this;
    const out = new Float64Array(shared.length + local.length);
    const y = new Float64Array(t);
    for (let a = 0; a < shared.length; a++) {
      y.fill(0);
      y[a] = 1;
      out[shared[a]] = forwardNorm(this.m, t, y);
    }
    for (let r = 0; r < local.length; r++) {
      for (let a = 0; a < t; a++) y[a] = border[r * t + a];
      out[local[r]] = 1 / d[r] + forwardNorm(this.m, t, y) / (d[r] * d[r]);
    }
    return out;
  }
}

/**
 * Factor of A = delta - Y Y' on `free` (Y nP x q, row-major). `residual[k]` marks residual
 * parameters. Null when the arrowhead structure does not hold (a residual diagonal entry that is
 * not positive), so the caller can take the dense route.
 */
export function borderedFactor(delta: SymmetricArrowhead, y: Float64Array, q: number, nP: number, free: readonly number[], residual: readonly boolean[]): BorderedOutcome {
  const shared: number[] = [];
  const local: number[] = [];
  for (let i = 0; i < free.length; i++) (residual[free[i]] ? local : shared).push(i);
  const s = shared.length;
  const t = s + q;
  const n = local.length;
  const d = new Float64Array(n);
  const border = new Float64Array(n * t);
  for (let r = 0; r < n; r++) {
    const k = free[local[r]];
    const dk = delta.get(k, k);
    if (!(dk > 0)) return null;
    d[r] = dk;
    for (let a = 0; a < s; a++) border[r * t + a] = delta.get(free[shared[a]], k);
    for (let a = 0; a < q; a++) border[r * t + s + a] = y[k * q + a];
  }
  // M = [[Delta_SS, Y_S], [Y_S', I]] - sum_i col_i col_i' / d_i
  const m = new Float64Array(t * t);
  for (let a = 0; a < s; a++) {
    const ja = free[shared[a]];
    for (let b = 0; b < s; b++) m[a * t + b] = delta.get(ja, free[shared[b]]);
    for (let b = 0; b < q; b++) {
      m[a * t + s + b] = y[ja * q + b];
      m[(s + b) * t + a] = y[ja * q + b];
    }
  }
  for (let b = 0; b < q; b++) m[(s + b) * t + s + b] += 1;
  for (let r = 0; r < n; r++) eliminateLocal(m, border, r, t, d[r]);
  try {
    choleskyInPlace(m, t);
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return { notPositiveDefinite: true };
    throw err;
  }
  return new BorderedFactor(shared, local, d, border, m, t);
}

/** Y = V L with C = L L' (nP x p), so that V C V' = Y Y'; null if C is not positive definite. */
export function lowRankFactor(v: Float64Array, c: Float64Array, nP: number, p: number): Float64Array | null {
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

function eliminateLocal(m: Float64Array, border: Float64Array, r: number, t: number, d: number): void {
  const o = r * t;
  for (let a = 0; a < t; a++) {
    const ca = border[o + a] / d;
    if (ca === 0) continue;
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

/** |L^-1 y|^2 (y overwritten). */
function forwardNorm(l: Float64Array, t: number, y: Float64Array): number {
  let norm = 0;
  for (let i = 0; i < t; i++) {
    let sum = y[i];
    for (let k = 0; k < i; k++) sum -= l[i * t + k] * y[k];
    y[i] = sum / l[i * t + i];
    norm += y[i] * y[i];
  }
  return norm;
}
