// Second-order quantities at the REML estimate, for standard errors and small-sample df:
//   P_k   = X'V^-1 V_k V^-1 X                       (p x p; -dC^-1/dtheta_k)
//   Q_kl  = X'V^-1 V_k V^-1 V_l V^-1 X              (p x p)
//   E_kl  = tr(P V_k P V_l)                          expected information of -2 logLik (x2)
//   O_kl  = 2 y'P V_k P V_l P y - tr(P V_k P V_l)   observed Hessian of -2 logLik
// with tr(P V_k P V_l) = tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) + tr(C P_k C P_l). All sums run
// trial by trial over the small blocks; Q_kl is only ever held per trial.
import { blockState, type Evaluation, type ModelFrame } from './remlCriterion.js';
import type { ScoreAndInformation } from './remlDerivatives.js';
import { ensureH2, nextInversePower } from './trialBlock.js';
import { localBlock, type ActiveParameter } from './trialParameters.js';

export interface SecondOrder {
  /** P_k for each parameter, p x p. */
  readonly p: Float64Array[];
  readonly expected: Float64Array;
  readonly observed: Float64Array;
}

type Small = { rows: number; cols: number; data: Float64Array };

function sub(a: Float64Array, m: number, rows: ArrayLike<number>, cols: ArrayLike<number>): Small {
  const out = new Float64Array(rows.length * cols.length);
  for (let i = 0; i < rows.length; i++) for (let j = 0; j < cols.length; j++) out[i * cols.length + j] = a[rows[i] * m + cols[j]];
  return { rows: rows.length, cols: cols.length, data: out };
}

function mul(a: Small, b: Small): Small {
  const out = new Float64Array(a.rows * b.cols);
  for (let i = 0; i < a.rows; i++)
    for (let k = 0; k < a.cols; k++) {
      const v = a.data[i * a.cols + k];
      if (v === 0) continue;
      for (let j = 0; j < b.cols; j++) out[i * b.cols + j] += v * b.data[k * b.cols + j];
    }
  return { rows: a.rows, cols: b.cols, data: out };
}

/** Per-trial pieces shared by the second-order sums and the Kenward–Roger correction. */
interface TrialForms {
  readonly pLocal: Map<number, Small>;
  /** Q_kl restricted to this trial's treatments, for each active pair (k, l) (both orders). */
  readonly q: (a: ActiveParameter, b: ActiveParameter) => Small;
  /** tr(V_i^-1 V_k V_i^-1 V_l). */
  readonly trVV: (a: ActiveParameter, b: ActiveParameter) => number;
}

function trialForms(frame: ModelFrame, ev: Evaluation, i: number, act: readonly ActiveParameter[]): TrialForms {
  const t = frame.stats.trials[i];
  const s = blockState(frame, ev, i);
  const m = t.m;
  const T = t.treatmentColumns;
  const H = s.h;
  const needH2 = act.some((a) => a.columns === null);
  const H2 = needH2 ? ensureH2(t, s) : null;
  let H3: Float64Array | null = null;
  const pLocal = new Map<number, Small>();
  for (const a of act) pLocal.set(a.index, a.columns ? mul(sub(H, m, T, a.columns), sub(H, m, a.columns, T)) : sub(H2!, m, T, T));
  const q = (a: ActiveParameter, b: ActiveParameter): Small => {
    if (a.columns && b.columns) return mul(mul(sub(H, m, T, a.columns), sub(H, m, a.columns, b.columns)), sub(H, m, b.columns, T));
    if (a.columns) return mul(sub(H, m, T, a.columns), sub(H2!, m, a.columns, T));
    if (b.columns) return mul(sub(H2!, m, T, b.columns), sub(H, m, b.columns, T));
    H3 ??= nextInversePower(t, s, H2!);
    return sub(H3, m, T, T);
  };
  const trVV = (a: ActiveParameter, b: ActiveParameter): number => {
    let v = 0;
    if (a.columns && b.columns) {
      for (const x of a.columns) for (const y of b.columns) v += H[x * m + y] ** 2;
    } else if (a.columns || b.columns) {
      for (const x of (a.columns ?? b.columns)!) v += H2![x * m + x];
    } else {
      v = (t.n - 2 * s.trWK + s.trWKWK) / (s.sigma2 * s.sigma2);
    }
    return v;
  };
  return { pLocal, q, trVV };
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
  for (let i = 0; i < frame.stats.trials.length; i++) {
    const t = frame.stats.trials[i];
    const tg = t.treatmentIndex;
    const cl = localBlock(ev.c, p, tg);
    const act = active[i];
    const f = trialForms(frame, ev, i, act);
    for (const a of act) {
      const pl = f.pLocal.get(a.index)!;
      const target = P[a.index];
      for (let x = 0; x < tg.length; x++) for (let y = 0; y < tg.length; y++) target[tg[x] * p + tg[y]] += pl.data[x * tg.length + y];
    }
    for (let ia = 0; ia < act.length; ia++)
      for (let ib = ia; ib < act.length; ib++) {
        const a = act[ia];
        const b = act[ib];
        const v = f.trVV(a, b) - 2 * traceProduct(cl, f.q(a, b));
        expected[a.index * nP + b.index] += v;
        if (a.index !== b.index) expected[b.index * nP + a.index] += v;
      }
  }
  // + tr(C P_k C P_l)
  const cp = P.map((pk) => matMul(ev.c, pk, p));
  for (let k = 0; k < nP; k++)
    for (let l = k; l < nP; l++) {
      let s = 0;
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) s += cp[k][a * p + b] * cp[l][b * p + a];
      expected[k * nP + l] += s;
      if (l !== k) expected[l * nP + k] += s;
    }
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
  for (let i = 0; i < frame.stats.trials.length; i++) {
    const tg = frame.stats.trials[i].treatmentIndex;
    const act = active[i];
    const f = trialForms(frame, ev, i, act);
    for (const a of act)
      for (const b of act) {
        const wab = w[a.index * nP + b.index];
        if (wab === 0) continue;
        const q = f.q(a, b);
        for (let x = 0; x < tg.length; x++) for (let y = 0; y < tg.length; y++) u[tg[x] * p + tg[y]] += wab * q.data[x * tg.length + y];
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
