// Score and average-information matrix of the REML criterion (-2 logLik_REML) with respect to
// the variance parameters, from the per-trial blocks (Gilmour, Thompson & Cullis 1995):
//   d/dtheta_k  = tr(P V_k) - y'P V_k P y
//   AI_kl       = y'P V_k P V_l P y
// with P = V^-1 - V^-1 X C X'V^-1, C = (X'V^-1 X)^-1, V_k = Z_k Z_k' or I. Everything is a
// bilinear form on B: P y = V^-1 r, r = B rho.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { ensureH2 } from './trialBlock.js';
import { localBlock, residualCoordinates, symmetricMatVec, type ActiveParameter } from './trialParameters.js';

export interface ScoreAndInformation {
  readonly gradient: Float64Array;
  /** Average information, nParameters x nParameters, row-major. */
  readonly ai: Float64Array;
  /** y'P V_k P y and tr(P V_k), kept for the EM update. */
  readonly quadratic: Float64Array;
  readonly trace: Float64Array;
}

export function scoreAndInformation(frame: ModelFrame, ev: Evaluation, active: readonly ActiveParameter[][]): ScoreAndInformation {
  const { stats } = frame;
  const nP = frame.layout.parameters.length;
  const p = stats.treatments.length;
  const trace = new Float64Array(nP);
  const quadratic = new Float64Array(nP);
  const ai = new Float64Array(nP * nP);
  // v_k = X'V^-1 V_k V^-1 r, nP x p
  const v = new Float64Array(nP * p);
  for (let i = 0; i < stats.trials.length; i++) {
    const t = stats.trials[i];
    const s = ev.states[i];
    const m = t.m;
    const H = s.h;
    const tc = t.treatmentColumns;
    const tg = t.treatmentIndex;
    const nt = tc.length;
    const cl = localBlock(ev.c, p, tg);
    const rho = residualCoordinates(frame, i, ev.beta);
    const h = symmetricMatVec(H, m, rho);
    const act = active[i];
    let h2: Float64Array | null = null;
    let H2: Float64Array | null = null;
    for (const a of act) {
      if (a.columns === null) {
        H2 = ensureH2(t, s);
        h2 = symmetricMatVec(H2, m, rho);
      }
    }
    for (const a of act) {
      const k = a.index;
      if (a.columns) {
        const Z = a.columns;
        for (const j of Z) {
          trace[k] += H[j * m + j];
          quadratic[k] += h[j] * h[j];
          // tr(C_loc H[T,j] H[j,T]) = H[j,T] C_loc H[T,j]
          let q = 0;
          for (let x = 0; x < nt; x++) {
            const hx = H[j * m + tc[x]];
            if (hx === 0) continue;
            let r = 0;
            for (let y = 0; y < nt; y++) r += cl[x * nt + y] * H[j * m + tc[y]];
            q += hx * r;
          }
          trace[k] -= q;
          for (let x = 0; x < nt; x++) v[k * p + tg[x]] += H[tc[x] * m + j] * h[j];
        }
      } else {
        const H2m = H2!;
        const h2v = h2!;
        trace[k] += (t.n - s.trWK) / s.sigma2;
        let q = 0;
        for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) q += cl[x * nt + y] * H2m[tc[y] * m + tc[x]];
        trace[k] -= q;
        let qq = 0;
        for (let j = 0; j < m; j++) qq += rho[j] * h2v[j];
        quadratic[k] += qq;
        for (let x = 0; x < nt; x++) v[k * p + tg[x]] += h2v[tc[x]];
      }
    }
    // first AI term: r'V^-1 V_k V^-1 V_l V^-1 r
    for (let ia = 0; ia < act.length; ia++) {
      const A = act[ia];
      for (let ib = ia; ib < act.length; ib++) {
        const B = act[ib];
        let val = 0;
        if (A.columns && B.columns) {
          for (const x of A.columns) {
            if (h[x] === 0) continue;
            let r = 0;
            for (const y of B.columns) r += H[x * m + y] * h[y];
            val += h[x] * r;
          }
        } else if (A.columns || B.columns) {
          const Z = (A.columns ?? B.columns)!;
          for (const x of Z) val += h[x] * h2![x];
        } else {
          // r'V^-3 r = a' h2 with V^-1 r = B a, a = (rho - E_R W (K rho)_R) / sigma2
          const aV = vInverseCoordinates(t.gram, m, s.randomColumns, s.w, s.sigma2, rho);
          for (let j = 0; j < m; j++) val += aV[j] * h2![j];
        }
        ai[A.index * nP + B.index] += val;
        if (A.index !== B.index) ai[B.index * nP + A.index] += val;
      }
    }
  }
  const gradient = new Float64Array(nP);
  for (let k = 0; k < nP; k++) gradient[k] = trace[k] - quadratic[k];
  // second AI term: - v_k' C v_l
  const cv = new Float64Array(nP * p);
  for (let k = 0; k < nP; k++)
    for (let a = 0; a < p; a++) {
      let s = 0;
      for (let b = 0; b < p; b++) s += ev.c[a * p + b] * v[k * p + b];
      cv[k * p + a] = s;
    }
  for (let k = 0; k < nP; k++)
    for (let l = k; l < nP; l++) {
      let s = 0;
      for (let a = 0; a < p; a++) s += v[k * p + a] * cv[l * p + a];
      ai[k * nP + l] -= s;
      if (l !== k) ai[l * nP + k] -= s;
    }
  return { gradient, ai, quadratic, trace };
}

/** Coordinates a with V^-1 B rho = B a. */
export function vInverseCoordinates(gram: Float64Array, m: number, R: Int32Array, w: Float64Array, sigma2: number, rho: Float64Array): Float64Array {
  const r = R.length;
  const kr = new Float64Array(r);
  for (let a = 0; a < r; a++) {
    let s = 0;
    for (let j = 0; j < m; j++) s += gram[R[a] * m + j] * rho[j];
    kr[a] = s;
  }
  const out = Float64Array.from(rho);
  for (let a = 0; a < r; a++) {
    let s = 0;
    for (let b = 0; b < r; b++) s += w[a * r + b] * kr[b];
    out[R[a]] -= s;
  }
  for (let j = 0; j < m; j++) out[j] /= sigma2;
  return out;
}
