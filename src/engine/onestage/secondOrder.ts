// Second-order quantities at the REML estimate, for standard errors and small-sample df:
//   P_k   = X'V^-1 V_k V^-1 X                       (p x p; -dC^-1/dtheta_k)
//   Q_kl  = X'V^-1 V_k V^-1 V_l V^-1 X              (p x p)
//   E_kl  = tr(P V_k P V_l)                          expected information of -2 logLik (x2)
//   O_kl  = 2 y'P V_k P V_l P y - tr(P V_k P V_l)   observed Hessian of -2 logLik
// with tr(P V_k P V_l) = tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) + tr(C P_k C P_l). All sums run
// over the small blocks. They depend on the design only, so each design pattern is visited once
// and weighted by its number of trials; Q_kl is only ever held per pattern.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import type { ScoreAndInformation } from './remlDerivatives.js';
import { ensurePatternH2 } from './trialBlock.js';
import { localBlock, type ActiveParameter } from './trialParameters.js';
import { f64 } from './arena.js';

export interface SecondOrder {
  /** P_k for each parameter, p x p. */
  readonly p: Float64Array[];
  readonly expected: Float64Array;
  readonly observed: Float64Array;
}

type Small = { rows: number; cols: number; data: Float64Array };

function sub(a: Float64Array, m: number, rows: ArrayLike<number>, cols: ArrayLike<number>): Small {
  const out = f64(rows.length * cols.length);
  for (let i = 0; i < rows.length; i++) for (let j = 0; j < cols.length; j++) out[i * cols.length + j] = a[rows[i] * m + cols[j]];
  return { rows: rows.length, cols: cols.length, data: out };
}

function mul(a: Small, b: Small): Small {
  const out = f64(a.rows * b.cols);
  for (let i = 0; i < a.rows; i++)
    for (let k = 0; k < a.cols; k++) {
      const v = a.data[i * a.cols + k];
      if (v === 0) continue;
      for (let j = 0; j < b.cols; j++) out[i * b.cols + j] += v * b.data[k * b.cols + j];
    }
  return { rows: a.rows, cols: b.cols, data: out };
}

/** Design-only pieces of one pattern (every trial of the pattern has the same ones). */
interface PatternForms {
  readonly pLocal: Map<number, Small>;
  /** Q_kl restricted to the pattern's treatments, for an active pair (k, l) in that order. */
  readonly q: (a: ActiveParameter, b: ActiveParameter) => Small;
  /** tr(V_i^-1 V_k V_i^-1 V_l). */
  readonly trVV: (a: ActiveParameter, b: ActiveParameter) => number;
}

function patternForms(frame: ModelFrame, ev: Evaluation, q: number, act: readonly ActiveParameter[]): PatternForms {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const mz = t.m - 1;
  const T = t.treatmentColumns;
  const H = pat.hzz;
  const H2 = ensurePatternH2(pat, mz);
  let H3: Small | null = null;
  const pLocal = new Map<number, Small>();
  for (const a of act) pLocal.set(a.index, a.columns ? mul(sub(H, mz, T, a.columns), sub(H, mz, a.columns, T)) : sub(H2, mz, T, T));
  const third = (): Small => {
    // B'V^-3 B on the treatment block: (H2_TT - gz_T. H2_RT) / sigma2
    const R = pat.randomColumns;
    const r = R.length;
    const nt = T.length;
    const out = f64(nt * nt);
    for (let x = 0; x < nt; x++)
      for (let y = 0; y < nt; y++) {
        let v = H2[T[x] * mz + T[y]];
        for (let b = 0; b < r; b++) v -= pat.gz[T[x] * r + b] * H2[R[b] * mz + T[y]];
        out[x * nt + y] = v / pat.sigma2;
      }
    return { rows: nt, cols: nt, data: out };
  };
  const qf = (a: ActiveParameter, b: ActiveParameter): Small => {
    if (a.columns && b.columns) return mul(mul(sub(H, mz, T, a.columns), sub(H, mz, a.columns, b.columns)), sub(H, mz, b.columns, T));
    if (a.columns) return mul(sub(H, mz, T, a.columns), sub(H2, mz, a.columns, T));
    if (b.columns) return mul(sub(H2, mz, T, b.columns), sub(H, mz, b.columns, T));
    H3 ??= third();
    return H3;
  };
  const trVV = (a: ActiveParameter, b: ActiveParameter): number => {
    let v = 0;
    if (a.columns && b.columns) {
      const ZA = a.columns;
      const ZB = b.columns;
      for (let xa = 0; xa < ZA.length; xa++) for (let yb = 0; yb < ZB.length; yb++) v += H[ZA[xa] * mz + ZB[yb]] ** 2;
    } else if (a.columns || b.columns) {
      const Z = (a.columns ?? b.columns)!;
      for (let xz = 0; xz < Z.length; xz++) v += H2[Z[xz] * mz + Z[xz]];
    } else {
      v = (t.n - 2 * pat.trWK + pat.trWKWK) / (pat.sigma2 * pat.sigma2);
    }
    return v;
  };
  return { pLocal, q: qf, trVV };
}

function traceProduct(a: Float64Array, b: Small): number {
  // tr(A B) for square A, B of the same size
  const n = b.rows;
  let s = 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) s += a[i * n + j] * b.data[j * n + i];
  return s;
}

export function secondOrder(frame: ModelFrame, ev: Evaluation, score: ScoreAndInformation, active: readonly ActiveParameter[][]): SecondOrder {
  const nP = frame.layout.parameters.length;
  const p = frame.stats.treatments.length;
  const P = Array.from({ length: nP }, () => new Float64Array(p * p));
  const expected = new Float64Array(nP * nP);
  for (let q = 0; q < frame.patternTrial.length; q++) {
    const i0 = frame.patternTrial[q];
    const count = frame.patternCount[q];
    const tg = frame.stats.trials[i0].treatmentIndex;
    const cl = localBlock(ev.c, p, tg);
    const act = active[i0];
    const f = patternForms(frame, ev, q, act);
    for (const a of act) {
      const pl = f.pLocal.get(a.index)!;
      const target = P[a.index];
      for (let x = 0; x < tg.length; x++) for (let y = 0; y < tg.length; y++) target[tg[x] * p + tg[y]] += count * pl.data[x * tg.length + y];
    }
    for (let ia = 0; ia < act.length; ia++)
      for (let ib = ia; ib < act.length; ib++) {
        const a = act[ia];
        const b = act[ib];
        const v = count * (f.trVV(a, b) - 2 * traceProduct(cl, f.q(a, b)));
        expected[a.index * nP + b.index] += v;
        if (a.index !== b.index) expected[b.index * nP + a.index] += v;
      }
  }
  // + tr(C P_k C P_l)
  // all C P_k in one array, and their transposes, so each pair is one contiguous dot product
  // (summed in the same order as the double loop over (a, b))
  const pp = p * p;
  const cp = new Float64Array(nP * pp);
  const cpT = new Float64Array(nP * pp);
  for (let k = 0; k < nP; k++) {
    cp.set(matMul(ev.c, P[k], p), k * pp);
    transposeInto(cp, k * pp, cpT, p);
  }
  for (let k = 0; k < nP; k++) addTraceRow(expected, cp, cpT, k, nP, pp);
  const observed = new Float64Array(nP * nP);
  for (let j = 0; j < nP * nP; j++) observed[j] = 2 * score.ai[j] - expected[j];
  return { p: P, expected, observed };
}

/**
 * Kenward–Roger bias correction term U = sum_kl W_kl (Q_kl - P_k C P_l) (p x p), where W is the
 * asymptotic covariance of the variance parameters (as pbkrtest's vcovAdj builds it).
 */
export function kenwardRogerU(frame: ModelFrame, ev: Evaluation, so: SecondOrder, w: Float64Array, active: readonly ActiveParameter[][]): Float64Array {
  const nP = frame.layout.parameters.length;
  const p = frame.stats.treatments.length;
  const u = new Float64Array(p * p);
  for (let qi = 0; qi < frame.patternTrial.length; qi++) {
    const i0 = frame.patternTrial[qi];
    const count = frame.patternCount[qi];
    const tg = frame.stats.trials[i0].treatmentIndex;
    const act = active[i0];
    const f = patternForms(frame, ev, qi, act);
    for (const a of act)
      for (const b of act) {
        const wab = w[a.index * nP + b.index];
        if (wab === 0) continue;
        const q = f.q(a, b);
        for (let x = 0; x < tg.length; x++) for (let y = 0; y < tg.length; y++) u[tg[x] * p + tg[y]] += count * wab * q.data[x * tg.length + y];
      }
  }
  const cp = so.p.map((pk) => matMul(ev.c, pk, p));
  for (let k = 0; k < nP; k++)
    for (let l = 0; l < nP; l++) {
      const wkl = w[k * nP + l];
      if (wkl === 0) continue;
      // P_k C P_l = P_k (C P_l)
      const pcp = matMul(so.p[k], cp[l], p);
      for (let j = 0; j < p * p; j++) u[j] -= wkl * pcp[j];
    }
  return u;
}

function transposeInto(src: Float64Array, o: number, dst: Float64Array, p: number): void {
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) dst[o + a * p + b] = src[o + b * p + a];
}

/** expected[k, l] (and [l, k]) += tr(C P_k C P_l) for l >= k. */
function addTraceRow(expected: Float64Array, cp: Float64Array, cpT: Float64Array, k: number, nP: number, pp: number): void {
  const ok = k * pp;
  for (let l = k; l < nP; l++) {
    const ol = l * pp;
    let s = 0;
    for (let j = 0; j < pp; j++) s += cp[ok + j] * cpT[ol + j];
    expected[k * nP + l] += s;
    if (l !== k) expected[l * nP + k] += s;
  }
}

export function matMul(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const v = a[i * n + k];
      if (v === 0) continue;
      for (let j = 0; j < n; j++) out[i * n + j] += v * b[k * n + j];
    }
  return out;
}
