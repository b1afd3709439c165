// The restricted likelihood's per-trial sums for the trials of one spectral group (see
// spectralGroups.ts). Per evaluation the group's layout is decomposed once,
//   D K_RR D = Q Lambda Q',   F = K_ZR D Q   (design rows, m - 1 by r),
// and each trial (residual variance s, data u = Z'y, y'y) adds
//   log|V_i|      = (n - r) log s + sum_a log(s + lambda_a)
//   X'V^-1 X     += K_TT / s + sum_a c1_a F_Ta F_Ta'
//   X'V^-1 y     += u_T / s  + sum_a c1_a g_a F_Ta
//   y'V^-1 y     += y'y / s  + sum_a c1_a g_a^2
// with g_a = u_R' D q_a and c1_a = -1 / (s (s + lambda_a)) (V_i^-1 = (I - Z W Z') / s,
// W = D Q (Lambda + s)^-1 Q' D); a runs over the directions with lambda_a > 0 (the others
// have F_a = 0 and count in n - r as lambda = 0). The sums over trials of the coefficients are taken first, so
// the design matrices enter once per group.
import { NotPositiveDefiniteError } from '../linalg/index.js';
import { symmetricEigenInPlace } from '../linalg/symmetricEigen.js';
import type { NetworkStatistics } from './sufficientStatistics.js';
import { groupLayout, type SpectralGroup } from './spectralGroups.js';
import { Scratch } from './arena.js';

/** One group's decomposition at one evaluation, and each trial's g. */
export interface SpectralState {
  /**
   * Number of eigen-directions kept: those with lambda_a > 0 beyond rounding (a direction with
   * lambda_a = 0 has F_a = 0 and adds nothing but log s to log|V_i|). Every array below has
   * this stride.
   */
  rank: number;
  readonly lambda: Float64Array;
  /** D Q, r x rank: entry (b, a) is d_b Q_ba. */
  readonly dq: Float64Array;
  /** F = K_ZR D Q, (m - 1) x rank. */
  readonly f: Float64Array;
  /** Per trial of the group (in group order), g = (Z'y)_R' D Q, rank each. */
  readonly g: Float64Array;
}

/** Eigenvalues at or below this fraction of trace(D K_RR D) are rounding (Jacobi is accurate to ~r eps of the norm). */
const NULL_EIGENVALUE = 1e-14;

export function spectralStateFor(stats: NetworkStatistics, group: SpectralGroup): SpectralState {
  const r = group.randomColumns.length;
  const mz = stats.trials[group.representative].m - 1;
  return { rank: 0, lambda: new Float64Array(r), dq: new Float64Array(r * r), f: new Float64Array(mz * r), g: new Float64Array(group.trials.length * r) };
}

const aScratch = new Scratch();
const qScratch = new Scratch();
const dScratch = new Scratch();
const coefScratch = new Scratch();
const valueScratch = new Scratch();
const keptScratch = new Scratch();

/** Decomposes the group's layout at term variances `termVariance` into `state` (lambda, dq, f). */
export function decomposeLayout(stats: NetworkStatistics, group: SpectralGroup, termVariance: ArrayLike<number>, state: SpectralState): void {
  const t = stats.trials[group.representative];
  const m = t.m;
  const mz = m - 1;
  const K = t.gram;
  const R = group.randomColumns;
  const r = R.length;
  const d = dScratch.get(r);
  for (let b = 0; b < r; b++) d[b] = Math.sqrt(Math.max(0, termVariance[t.termOfColumn[R[b]]]));
  const a = aScratch.get(r * r);
  for (let x = 0; x < r; x++) for (let y = 0; y < r; y++) a[x * r + y] = d[x] * K[R[x] * m + R[y]] * d[y];
  let trace = 0;
  for (let x = 0; x < r; x++) trace += a[x * r + x];
  const q = qScratch.get(r * r);
  const values = valueScratch.get(r);
  symmetricEigenInPlace(a, r, values, q);
  // keep the directions with lambda > 0, as columns 0 .. ne - 1
  const kept = keptScratch.get(r);
  let ne = 0;
  for (let c = 0; c < r; c++) if (values[c] > NULL_EIGENVALUE * trace) kept[ne++] = c;
  state.rank = ne;
  const dq = state.dq;
  for (let c = 0; c < ne; c++) state.lambda[c] = values[kept[c]];
  for (let b = 0; b < r; b++) for (let c = 0; c < ne; c++) dq[b * ne + c] = d[b] * q[b * r + kept[c]];
  const f = state.f;
  for (let j = 0; j < mz; j++) layoutRow(K, j * m, R, dq, ne, f, j * ne);
}

/** out[o + a] = sum_b K[ko + R_b] dq[b, a] (a < ne), skipping the zero entries of the indicator Gram row. */
function layoutRow(K: Float64Array, ko: number, R: Int32Array, dq: Float64Array, ne: number, out: Float64Array, o: number): void {
  for (let a = 0; a < ne; a++) out[o + a] = 0;
  for (let b = 0; b < R.length; b++) {
    const k = K[ko + R[b]];
    if (k === 0) continue;
    for (let a = 0; a < ne; a++) out[o + a] += k * dq[b * ne + a];
  }
}

/**
 * Adds the group's trials to X'V^-1 X (p x p), X'V^-1 y and, in sums[0] and sums[1], to
 * sum log|V_i| and y'V^-1 y. Fills state.g. Throws NotPositiveDefiniteError where a residual
 * variance is not positive (outside the parameter space, as the pattern route's Cholesky does).
 */
export function accumulateGroup(stats: NetworkStatistics, group: SpectralGroup, theta: ArrayLike<number>, state: SpectralState, p: number, xvx: Float64Array, xvy: Float64Array, sums: Float64Array): void {
  const { m, K, R, T, tg, nt } = groupLayout(stats, group);
  const mz = m - 1;
  const { rank: ne, lambda, dq, g } = state;
  // per-group sums over trials: S1 = sum 1/s, alpha_a = sum c1_a, beta_a = sum c1_a g_a, uT = sum u_T / s
  const coef = coefScratch.get(2 * ne + nt + 1);
  coef.fill(0, 0, 2 * ne + nt + 1);
  const alpha = 0;
  const beta = ne;
  const uT = 2 * ne;
  const s1 = 2 * ne + nt;
  let logDet = 0;
  let yvy = 0;
  for (let e = 0; e < group.trials.length; e++) {
    const ti = stats.trials[group.trials[e]];
    const s = theta[group.residualParameter[e]];
    if (!(s > 0)) throw new NotPositiveDefiniteError(e, s);
    const Ki = ti.gram;
    const go = e * ne;
    trialProjection(Ki, m, mz, R, dq, ne, g, go);
    logDet += (ti.n - ne) * Math.log(s);
    yvy += Ki[m * m - 1] / s;
    for (let a = 0; a < ne; a++) {
      const sl = s + lambda[a];
      logDet += Math.log(sl);
      const c1 = -1 / (s * sl);
      const ga = g[go + a];
      coef[alpha + a] += c1;
      coef[beta + a] += c1 * ga;
      yvy += c1 * ga * ga;
    }
    for (let x = 0; x < nt; x++) coef[uT + x] += Ki[T[x] * m + mz] / s;
    coef[s1] += 1 / s;
  }
  const f = state.f;
  for (let x = 0; x < nt; x++) {
    const fx = T[x] * ne;
    let v = coef[uT + x];
    for (let a = 0; a < ne; a++) v += coef[beta + a] * f[fx + a];
    xvy[tg[x]] += v;
    for (let y = 0; y < nt; y++) {
      const fy = T[y] * ne;
      let w = K[T[x] * m + T[y]] * coef[s1];
      for (let a = 0; a < ne; a++) w += coef[alpha + a] * f[fx + a] * f[fy + a];
      xvx[tg[x] * p + tg[y]] += w;
    }
  }
  sums[0] += logDet;
  sums[1] += yvy;
}

/** g[o + a] = sum_b u[R_b] dq[b, a] (a < ne), u = the trial's Z'y (its Gram matrix's y column). */
function trialProjection(K: Float64Array, m: number, mz: number, R: Int32Array, dq: Float64Array, ne: number, g: Float64Array, o: number): void {
  for (let a = 0; a < ne; a++) g[o + a] = 0;
  for (let b = 0; b < R.length; b++) {
    const u = K[R[b] * m + mz];
    if (u === 0) continue;
    for (let a = 0; a < ne; a++) g[o + a] += u * dq[b * ne + a];
  }
}
