// Score and average-information matrix of the REML criterion (-2 logLik_REML) with respect to
// the variance parameters, from the per-trial blocks (Gilmour, Thompson & Cullis 1995):
//   d/dtheta_k  = tr(P V_k) - y'P V_k P y
//   AI_kl       = y'P V_k P V_l P y
// with P = V^-1 - V^-1 X C X'V^-1, C = (X'V^-1 X)^-1, V_k = Z_k Z_k' or I. Everything is a
// bilinear form on B: P y = V^-1 r, r = B rho with rho = (-beta on the treatment columns, 1 on y).
// The trace terms depend on the design only, so they are computed once per design pattern;
// the data enter through each pattern's moments (patternMoments.ts), so an iteration costs
// O(patterns), not O(trials) — for networks of identically laid-out trials, O(1).
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { ensurePatternH2, type PatternState } from './trialBlock.js';
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
    const act0 = active[i0];
    for (let ia = 0; ia < act0.length; ia++) {
      const a = act0[ia];
      let tr = 0;
      if (a.columns) {
        const Z = a.columns;
        for (let jz = 0; jz < Z.length; jz++) {
          const j = Z[jz];
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
  let col = 0;
  for (let q = 0; q < ev.patterns.length; q++) {
    const i0 = frame.patternTrial[q];
    const t = stats.trials[i0];
    const pat = ev.patterns[q];
    const mo = frame.moments[q];
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
    const act = active[i0];
    // Quadratic terms, column by column. Every term below is of degree two in (u, c): where a
    // constant (beta) meets a data-linear quantity the column's c stands in for the trial's 1.
    for (let f = 0; f < mo.nColumns; f++, col++) {
      const u = mo.columns.subarray(f * m, f * m + m);
      const c = u[mz];
      const hzy = ev.hzy.subarray(frame.columnOffsets[q] + f * mz, frame.columnOffsets[q] + (f + 1) * mz);
      vectorsOf(H, H2, pat, hzy, c, ev.beta, tc, tg, mz, h, h2, h2y);
      // y entry of h2 = B'V^-2 r: (H_yy - u_R' W H_Ry) / sigma2 - c beta . h2y_T   (y'y part added per pattern)
      let h2last = ev.hyy[col];
      for (let a = 0; a < r; a++) {
        let w = 0;
        for (let b = 0; b < r; b++) w += pat.w[a * r + b] * hzy[R[b]];
        h2last -= u[R[a]] * w;
      }
      h2last /= s2;
      for (let x = 0; x < nt; x++) h2last -= c * h2y[tc[x]] * ev.beta[tg[x]];
      h2[mz] = h2last;
      for (let ia = 0; ia < act.length; ia++) {
        const a = act[ia];
        if (a.columns) {
          const Z = a.columns;
          for (let jz = 0; jz < Z.length; jz++) quadratic[a.index] += h[Z[jz]] * h[Z[jz]];
        } else {
          let qq = h2[mz];
          for (let x = 0; x < nt; x++) qq -= c * ev.beta[tg[x]] * h2[tc[x]];
          quadratic[a.index] += qq;
        }
      }
      for (let ia = 0; ia < act.length; ia++) {
        const A = act[ia];
        for (let ib = ia; ib < act.length; ib++) {
          const B = act[ib];
          let val = 0;
          if (A.columns && B.columns) {
            const ZA = A.columns;
            const ZB = B.columns;
            for (let xa = 0; xa < ZA.length; xa++) {
              const x = ZA[xa];
              if (h[x] === 0) continue;
              let sum = 0;
              for (let yb = 0; yb < ZB.length; yb++) sum += H[x * mz + ZB[yb]] * h[ZB[yb]];
              val += h[x] * sum;
            }
          } else if (A.columns || B.columns) {
            const Z = (A.columns ?? B.columns)!;
            for (let xz = 0; xz < Z.length; xz++) val += h[Z[xz]] * h2[Z[xz]];
          } else {
            // r'V^-3 r = a . h2 / sigma2 with V^-1 r = B a / sigma2, a = rho - E_R W (K rho)_R
            for (let b = 0; b < r; b++) {
              let sum = u[R[b]];
              for (let x = 0; x < nt; x++) sum -= c * K[R[b] * m + tc[x]] * ev.beta[tg[x]];
              kr[b] = sum;
            }
            av.fill(0, 0, m);
            for (let x = 0; x < nt; x++) av[tc[x]] = -c * ev.beta[tg[x]];
            av[mz] = 1;
            for (let a = 0; a < r; a++) {
              let sum = 0;
              for (let b = 0; b < r; b++) sum += pat.w[a * r + b] * kr[b];
              av[R[a]] -= sum;
            }
            for (let j = 0; j < m; j++) val += (av[j] / s2) * h2[j];
          }
          ai[A.index * nP + B.index] += val;
          if (A.index !== B.index) ai[B.index * nP + A.index] += val;
        }
      }
    }
    // the y'y parts: r'V^-2 r and r'V^-3 r contain sum y'y / sigma2^2 and / sigma2^3
    for (let ia = 0; ia < act.length; ia++) {
      const a = act[ia];
      if (!a.columns) {
        quadratic[a.index] += mo.sumYy / (s2 * s2);
        ai[a.index * nP + a.index] += mo.sumYy / (s2 * s2 * s2);
      }
    }
    // linear terms from the summed data vector (c = number of trials)
    vectorsOf(H, H2, pat, ev.hzySum[q], mo.sum[mz], ev.beta, tc, tg, mz, h, h2, h2y);
    for (let ia = 0; ia < act.length; ia++) {
      const a = act[ia];
      const k = a.index;
      if (a.columns) {
        const Z = a.columns;
        for (let jz = 0; jz < Z.length; jz++) for (let x = 0; x < nt; x++) v[k * p + tg[x]] += H[tc[x] * mz + Z[jz]] * h[Z[jz]];
      } else {
        for (let x = 0; x < nt; x++) v[k * p + tg[x]] += h2[tc[x]];
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

/**
 * Design rows of h = B'V^-1 r and h2 = B'V^-2 r for one data column (u, c): r = y - X beta, with
 * the column's c in place of the trial's 1 where beta enters. Also h2y = design rows of B'V^-2 y.
 */
function vectorsOf(H: Float64Array, H2: Float64Array, pat: PatternState, hzy: ArrayLike<number>, c: number, beta: Float64Array, tc: Int32Array, tg: Int32Array, mz: number, h: Float64Array, h2: Float64Array, h2y: Float64Array): void {
  const R = pat.randomColumns;
  const r = R.length;
  const nt = tc.length;
  for (let j = 0; j < mz; j++) {
    let s = hzy[j];
    let s2 = 0;
    for (let x = 0; x < nt; x++) {
      const b = beta[tg[x]];
      s -= c * H[j * mz + tc[x]] * b;
      s2 += H2[j * mz + tc[x]] * b;
    }
    h[j] = s;
    let y2 = hzy[j];
    for (let b = 0; b < r; b++) y2 -= pat.gz[j * r + b] * hzy[R[b]];
    y2 /= pat.sigma2;
    h2y[j] = y2;
    h2[j] = y2 - c * s2;
  }
}
