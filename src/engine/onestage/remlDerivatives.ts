// Score and average-information matrix of the REML criterion (-2 logLik_REML) with respect to
// the variance parameters, from the per-trial blocks (Gilmour, Thompson & Cullis 1995):
//   d/dtheta_k  = tr(P V_k) - y'P V_k P y
//   AI_kl       = y'P V_k P V_l P y
// with P = V^-1 - V^-1 X C X'V^-1, C = (X'V^-1 X)^-1, V_k = Z_k Z_k' or I. Everything is a
// bilinear form on B: P y = V^-1 r, r = B rho with rho = (-beta on the treatment columns, 1 on y).
// The trace terms depend on the design only, so they are computed once per design pattern;
// per trial only the vectors h = B'V^-1 r and h2 = B'V^-2 r are formed.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { ensurePatternH2 } from './trialBlock.js';
import { localBlock, type ActiveParameter } from './trialParameters.js';

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
  const v = new Float64Array(nP * p); // v_k = X'V^-1 V_k V^-1 r

  // design-only trace terms, once per pattern
  ev.patterns.forEach((pat, q) => {
    const i0 = frame.patternTrial[q];
    const t = stats.trials[i0];
    const mz = t.m - 1;
    const H = pat.hzz;
    const tc = t.treatmentColumns;
    const nt = tc.length;
    const cl = localBlock(ev.c, p, t.treatmentIndex);
    const count = frame.patternCount[q];
    for (const a of active[i0]) {
      let tr = 0;
      if (a.columns) {
        for (const j of a.columns) {
          tr += H[j * mz + j];
          let s = 0;
          for (let x = 0; x < nt; x++) {
            const hx = H[j * mz + tc[x]];
            if (hx === 0) continue;
            let r = 0;
            for (let y = 0; y < nt; y++) r += cl[x * nt + y] * H[j * mz + tc[y]];
            s += hx * r;
          }
          tr -= s;
        }
      } else {
        const H2 = ensurePatternH2(pat, mz);
        tr += (t.n - pat.trWK) / pat.sigma2;
        let s = 0;
        for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) s += cl[x * nt + y] * H2[tc[y] * mz + tc[x]];
        tr -= s;
      }
      trace[a.index] += count * tr;
    }
  });

  const maxM = stats.trials.reduce((mx, t) => Math.max(mx, t.m), 1);
  const h = new Float64Array(maxM);
  const h2 = new Float64Array(maxM);
  const h2y = new Float64Array(maxM);
  const av = new Float64Array(maxM);
  const kr = new Float64Array(maxM);
  for (let i = 0; i < stats.trials.length; i++) {
    const t = stats.trials[i];
    const pat = ev.patterns[frame.patternOf[i]];
    const m = t.m;
    const mz = m - 1;
    const K = t.gram;
    const H = pat.hzz;
    const H2 = ensurePatternH2(pat, mz);
    const R = pat.randomColumns;
    const r = R.length;
    const s2 = pat.sigma2;
    const tc = t.treatmentColumns;
    const tg = t.treatmentIndex;
    const nt = tc.length;
    const o = frame.offsets[i];
    const hzy = ev.hzy;
    // h = H rho: design rows H_Z,T rho_T + H_Zy ; y entry H_yT rho_T + H_yy
    let hy = ev.hyy[i];
    for (let j = 0; j < mz; j++) {
      let s = hzy[o + j];
      for (let x = 0; x < nt; x++) s -= H[j * mz + tc[x]] * ev.beta[tg[x]];
      h[j] = s;
    }
    for (let x = 0; x < nt; x++) hy -= hzy[o + tc[x]] * ev.beta[tg[x]];
    h[mz] = hy;
    // H2_Zy = (H_Zy - gz H_Ry) / sigma2 ; H2_yy = (H_yy - K_yR W H_Ry) / sigma2
    for (let j = 0; j < mz; j++) {
      let s = hzy[o + j];
      for (let b = 0; b < r; b++) s -= pat.gz[j * r + b] * hzy[o + R[b]];
      h2y[j] = s / s2;
    }
    let h2yy = ev.hyy[i];
    for (let a = 0; a < r; a++) {
      let s = 0;
      for (let b = 0; b < r; b++) s += pat.w[a * r + b] * hzy[o + R[b]];
      h2yy -= K[mz * m + R[a]] * s;
    }
    h2yy /= s2;
    let h2last = h2yy;
    for (let j = 0; j < mz; j++) {
      let s = h2y[j];
      for (let x = 0; x < nt; x++) s -= H2[j * mz + tc[x]] * ev.beta[tg[x]];
      h2[j] = s;
    }
    for (let x = 0; x < nt; x++) h2last -= h2y[tc[x]] * ev.beta[tg[x]];
    h2[mz] = h2last;
    const act = active[i];
    for (const a of act) {
      const k = a.index;
      if (a.columns) {
        for (const j of a.columns) {
          quadratic[k] += h[j] * h[j];
          for (let x = 0; x < nt; x++) v[k * p + tg[x]] += H[tc[x] * mz + j] * h[j];
        }
      } else {
        // rho' h2 = h2[y] - beta_T . h2[T]
        let qq = h2[mz];
        for (let x = 0; x < nt; x++) qq -= ev.beta[tg[x]] * h2[tc[x]];
        quadratic[k] += qq;
        for (let x = 0; x < nt; x++) v[k * p + tg[x]] += h2[tc[x]];
      }
    }
    // first AI term r'V^-1 V_k V^-1 V_l V^-1 r
    for (let ia = 0; ia < act.length; ia++) {
      const A = act[ia];
      for (let ib = ia; ib < act.length; ib++) {
        const B = act[ib];
        let val = 0;
        if (A.columns && B.columns) {
          for (const x of A.columns) {
            if (h[x] === 0) continue;
            let s = 0;
            for (const y of B.columns) s += H[x * mz + y] * h[y];
            val += h[x] * s;
          }
        } else if (A.columns || B.columns) {
          for (const x of (A.columns ?? B.columns)!) val += h[x] * h2[x];
        } else {
          // r'V^-3 r = a . h2 with V^-1 r = B a, a = (rho - E_R W (K rho)_R) / sigma2
          for (let b = 0; b < r; b++) {
            let s = K[R[b] * m + mz];
            for (let x = 0; x < nt; x++) s -= K[R[b] * m + tc[x]] * ev.beta[tg[x]];
            kr[b] = s;
          }
          av.fill(0, 0, m);
          for (let x = 0; x < nt; x++) av[tc[x]] = -ev.beta[tg[x]];
          av[mz] = 1;
          for (let a = 0; a < r; a++) {
            let s = 0;
            for (let b = 0; b < r; b++) s += pat.w[a * r + b] * kr[b];
            av[R[a]] -= s;
          }
          for (let j = 0; j < m; j++) val += (av[j] / s2) * h2[j];
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
