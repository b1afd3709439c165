// Second-order terms (secondOrder.ts) for the trials of one spectral group. Each trial's small
// blocks of B'V^-k B come from the group's decomposition (spectralGroups.ts),
//   H_TR = K_TR / s + F_T c1 F_R',  H_RR = K_RR / s + F_R c1 F_R',  H2 likewise with c2,
// and then enter exactly as a pattern's blocks do: P_k, and E_kl = tr(V^-1 V_k V^-1 V_l)
// - 2 tr(C Q_kl) (the network-wide tr(C P_k C P_l) is added by secondOrder).
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import type { SpectralState } from './spectralEvaluation.js';
import type { SpectralGroup } from './spectralGroups.js';
import { Scratch } from './arena.js';

const blockScratch = new Scratch();
const designScratch = new Scratch();

export function spectralExpected(frame: ModelFrame, ev: Evaluation, gi: number, P: Float64Array[], expected: Float64Array): void {
  const group = frame.spectral[gi];
  const state = (ev.spectral as readonly SpectralState[])[gi];
  const t0 = frame.stats.trials[group.representative];
  const p = frame.stats.fixed.length;
  const r = group.randomColumns.length;
  const nt = t0.fixedColumns.length;
  // design pieces: C on the group's fixed effects (nt x nt), phi_a = F_Ta' C F_Ta, kappa = tr(C K_TT)
  const d = designScratch.get(nt * nt + r + 1);
  const m = t0.m;
  const T = t0.fixedColumns;
  const tg = t0.fixedIndex;
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) d[x * nt + y] = ev.c[tg[x] * p + tg[y]];
  const PHI = nt * nt;
  for (let a = 0; a < r; a++) {
    let s = 0;
    for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) s += state.f[T[x] * r + a] * d[x * nt + y] * state.f[T[y] * r + a];
    d[PHI + a] = s;
  }
  let kappa = 0;
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) kappa += d[x * nt + y] * t0.gram[T[y] * m + T[x]];
  d[PHI + r] = kappa;
  // per trial: c1, c2 (r each), HTR, H2TR, W (nt x r each), HRR, RC (r x r each), H2TT (nt x nt)
  const work = blockScratch.get(2 * r + 3 * nt * r + 2 * r * r + nt * nt);
  for (let e = 0; e < group.trials.length; e++) trialExpected(frame, group, state, ev.theta[group.residualParameter[e]], d, e, work, P, expected);
}

function trialExpected(frame: ModelFrame, group: SpectralGroup, state: SpectralState, s: number, d: Float64Array, e: number, work: Float64Array, P: Float64Array[], expected: Float64Array): void {
  const t = frame.stats.trials[group.trials[e]];
  const m = t.m;
  const K = t.gram;
  const R = group.randomColumns;
  const r = R.length;
  const T = t.fixedColumns;
  const tg = t.fixedIndex;
  const nt = T.length;
  const p = frame.stats.fixed.length;
  const nP = frame.layout.parameters.length;
  const { lambda, f } = state;
  const sig = group.residualParameter[e];
  const C1 = 0;
  const C2 = r;
  const HTR = 2 * r;
  const H2TR = HTR + nt * r;
  const W = H2TR + nt * r;
  const HRR = W + nt * r;
  const RC = HRR + r * r;
  const H2TT = RC + r * r;
  const PHI = nt * nt;
  let trV2 = (t.n - r) / (s * s);
  let trCH3 = d[PHI + r] / (s * s * s);
  for (let a = 0; a < r; a++) {
    const l = lambda[a];
    const sl = s + l;
    work[C1 + a] = -1 / (s * sl);
    work[C2 + a] = -(2 * s + l) / (s * s * sl * sl);
    trV2 += 1 / (sl * sl);
    trCH3 += (-(3 * s * s + 3 * s * l + l * l) / (s * s * s * sl * sl * sl)) * d[PHI + a];
  }
  spectralBlock(K, m, T, R, f, r, work, C1, 1 / s, work, HTR);
  spectralBlock(K, m, T, R, f, r, work, C2, 1 / (s * s), work, H2TR);
  spectralBlock(K, m, R, R, f, r, work, C1, 1 / s, work, HRR);
  spectralBlock(K, m, T, T, f, r, work, C2, 1 / (s * s), work, H2TT);
  // W = C_TT H_TR (nt x r), RC = H_RT W (r x r)
  for (let x = 0; x < nt; x++)
    for (let b = 0; b < r; b++) {
      let v = 0;
      for (let y = 0; y < nt; y++) v += d[x * nt + y] * work[HTR + y * r + b];
      work[W + x * r + b] = v;
    }
  for (let a = 0; a < r; a++)
    for (let b = 0; b < r; b++) {
      let v = 0;
      for (let x = 0; x < nt; x++) v += work[HTR + x * r + a] * work[W + x * r + b];
      work[RC + a * r + b] = v;
    }
  // P_k: sum over the term's columns of H_Tj H_Tj' ; P of the residual: H2_TT
  for (const term of group.terms) {
    const target = P[term.parameter];
    const pos = term.positions;
    for (let x = 0; x < nt; x++)
      for (let y = 0; y < nt; y++) {
        let v = 0;
        for (let z = 0; z < pos.length; z++) v += work[HTR + x * r + pos[z]] * work[HTR + y * r + pos[z]];
        target[tg[x] * p + tg[y]] += v;
      }
  }
  const pr = P[sig];
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) pr[tg[x] * p + tg[y]] += work[H2TT + x * nt + y];
  const terms = group.terms;
  for (let ia = 0; ia < terms.length; ia++) {
    const A = terms[ia];
    for (let ib = ia; ib < terms.length; ib++) {
      const B = terms[ib];
      let v = 0;
      for (const x of A.positions)
        for (const y of B.positions) {
          const h = work[HRR + x * r + y];
          v += h * h - 2 * h * work[RC + y * r + x];
        }
      expected[A.parameter * nP + B.parameter] += v;
      if (A.parameter !== B.parameter) expected[B.parameter * nP + A.parameter] += v;
    }
    // with the residual: tr(Z_k'V^-2 Z_k) - 2 sum_z H2_zT W_z
    let v = 0;
    for (const z of A.positions) {
      const j = R[z];
      let h2 = K[j * m + j] / (s * s);
      for (let a = 0; a < r; a++) h2 += work[C2 + a] * f[j * r + a] * f[j * r + a];
      let d2 = 0;
      for (let x = 0; x < nt; x++) d2 += work[H2TR + x * r + z] * work[W + x * r + z];
      v += h2 - 2 * d2;
    }
    expected[A.parameter * nP + sig] += v;
    expected[sig * nP + A.parameter] += v;
  }
  expected[sig * nP + sig] += trV2 - 2 * trCH3;
}

/** out[o + x * |cols| + y] = K[rows_x, cols_y] * scale + sum_a c_a F[rows_x, a] F[cols_y, a]. */
function spectralBlock(K: Float64Array, m: number, rows: Int32Array, cols: Int32Array, f: Float64Array, r: number, coef: Float64Array, co: number, scale: number, out: Float64Array, o: number): void {
  const nc = cols.length;
  for (let x = 0; x < rows.length; x++) {
    const fx = rows[x] * r;
    for (let y = 0; y < nc; y++) {
      const fy = cols[y] * r;
      let v = K[rows[x] * m + cols[y]] * scale;
      for (let a = 0; a < r; a++) v += coef[co + a] * f[fx + a] * f[fy + a];
      out[o + x * nc + y] = v;
    }
  }
}
