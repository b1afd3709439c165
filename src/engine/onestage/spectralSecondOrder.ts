// Second-order terms (secondOrder.ts) for the trials of one spectral group (spectralGroups.ts).
// Every block a pattern would hold is K / s^k + sum_a ck_a F_a F_a' for the trial's residual
// variance s, so each term is a polynomial in the trial's coefficients (c1, c2, c3 and powers of
// 1/s). The residual parameter's terms are per trial (O(ne^2) each); the random terms' terms are
// sums over the group's trials, so the trials contribute sums of those coefficients and their
// products (up to c1_a c1_b c1_c for tr(C Q_kl)), and the design enters once per group:
//   P_k     = sum_i sum_{j in k} H_Tj H_Tj'
//   E_kl    = sum_i tr(H_kl H_lk) - 2 tr(C H_Tk H_kl H_lT)          (random terms k, l)
//   E_k,si  = tr(Z_k'V_i^-2 Z_k) - 2 sum_{z in k} H2_zT C H_Tz        (term k, trial i's residual)
//   E_si,si = tr(V_i^-2) - 2 tr(C H3_TT),  P_si = H2_TT
// with H = B'V_i^-1 B, H2 = B'V_i^-2 B, H3 = B'V_i^-3 B on the trial's columns (T its fixed
// columns, R random columns, j, x, y, z in R) and C = (X'V^-1 X)^-1 on T. Expansions of the
// products in the coefficients are written out next to each piece below.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import type { SpectralState } from './spectralEvaluation.js';
import { groupLayout, type SpectralGroup } from './spectralGroups.js';
import { Scratch } from './arena.js';
import type { SymmetricArrowhead } from './arrowhead.js';

/** Sums over a group's trials, laid out in one array (see sumLayout). */
interface SumLayout {
  readonly s2: number;
  readonly s3: number;
  /** psi_a = sum c1_a / s, omega_a = sum c1_a / s^2 (ne each). */
  readonly psi: number;
  readonly omega: number;
  /** Gamma = sum c1 c1', GammaS = sum c1 c1' / s (ne x ne, upper triangle while summing). */
  readonly gamma: number;
  readonly gammaS: number;
  /** Gamma3_abc = sum c1_a c1_b c1_c (ne^3, a <= b <= c while summing). */
  readonly gamma3: number;
  readonly size: number;
}

function sumLayout(ne: number): SumLayout {
  const psi = 2;
  const omega = psi + ne;
  const gamma = omega + ne;
  const gammaS = gamma + ne * ne;
  const gamma3 = gammaS + ne * ne;
  return { s2: 0, s3: 1, psi, omega, gamma, gammaS, gamma3, size: gamma3 + ne * ne * ne };
}

/** Design pieces of one group: C on T and products of K, F and C that every trial shares. */
interface DesignPieces {
  readonly nt: number;
  readonly ne: number;
  readonly r: number;
  /** C_TT (nt x nt). */
  readonly cl: Float64Array;
  /** FCF = F_T' C F_T (ne x ne); phi_a its diagonal. */
  readonly fcf: Float64Array;
  readonly kappa: number;
  /** KCF_xb = K_Tx' C F_Tb (r x ne, x in R); KCK = K_RT C K_TR (r x r). */
  readonly kcf: Float64Array;
  readonly kck: Float64Array;
  /** Per term k: N^k_ab = sum_{j in k} F_ja F_jb (ne x ne), tau0_k = sum_j K_Tj' C K_Tj, tau1_ka = sum_j F_ja KCF_ja, trK_k = sum_j K_jj. */
  readonly n: Float64Array[];
  readonly tau0: Float64Array;
  readonly tau1: Float64Array[];
  readonly trK: Float64Array;
}

const sumScratch = new Scratch();
const coefScratch = new Scratch();

export function spectralExpected(frame: ModelFrame, ev: Evaluation, gi: number, P: Float64Array[], expected: SymmetricArrowhead): void {
  const group = frame.spectral[gi];
  const state = (ev.spectral as readonly SpectralState[])[gi];
  const pieces = designPieces(frame, group, state, ev.c);
  const L = sumLayout(state.rank);
  const sums = sumScratch.get(L.size);
  sums.fill(0, 0, L.size);
  const coef = coefScratch.get(3 * state.rank);
  for (let e = 0; e < group.trials.length; e++) {
    const s = ev.theta[group.residualParameter[e]];
    trialCoefficients(state, s, coef);
    residualTerms(frame, group, state, pieces, e, s, coef, P, expected);
    accumulate(L, state.rank, s, coef, sums);
  }
  symmetriseSums(L, state.rank, sums);
  termTerms(frame, group, state, pieces, L, sums, P, expected);
}

/** c1, c2, c3 (ne each) of a trial with residual variance s. */
function trialCoefficients(state: SpectralState, s: number, coef: Float64Array): void {
  const ne = state.rank;
  for (let a = 0; a < ne; a++) {
    const l = state.lambda[a];
    const sl = s + l;
    coef[a] = -1 / (s * sl);
    coef[ne + a] = -(2 * s + l) / (s * s * sl * sl);
    coef[2 * ne + a] = -(3 * s * s + 3 * s * l + l * l) / (s * s * s * sl * sl * sl);
  }
}

function designPieces(frame: ModelFrame, group: SpectralGroup, state: SpectralState, c: Float64Array): DesignPieces {
  const { m, K, R, r, T, tg, nt } = groupLayout(frame.stats, group);
  const { rank: ne, f } = state;
  const p = frame.stats.fixed.length;
  const cl = new Float64Array(nt * nt);
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) cl[x * nt + y] = c[tg[x] * p + tg[y]];
  // CF = C F_T (nt x ne), CK = C K_TR (nt x r)
  const cf = new Float64Array(nt * ne);
  for (let x = 0; x < nt; x++) for (let a = 0; a < ne; a++) for (let y = 0; y < nt; y++) cf[x * ne + a] += cl[x * nt + y] * f[T[y] * ne + a];
  const ck = new Float64Array(nt * r);
  for (let x = 0; x < nt; x++) for (let j = 0; j < r; j++) for (let y = 0; y < nt; y++) ck[x * r + j] += cl[x * nt + y] * K[T[y] * m + R[j]];
  const fcf = new Float64Array(ne * ne);
  for (let a = 0; a < ne; a++) for (let b = 0; b < ne; b++) for (let x = 0; x < nt; x++) fcf[a * ne + b] += f[T[x] * ne + a] * cf[x * ne + b];
  const kcf = new Float64Array(r * ne);
  for (let j = 0; j < r; j++) for (let b = 0; b < ne; b++) for (let x = 0; x < nt; x++) kcf[j * ne + b] += K[T[x] * m + R[j]] * cf[x * ne + b];
  const kck = new Float64Array(r * r);
  for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) for (let x = 0; x < nt; x++) kck[i * r + j] += K[T[x] * m + R[i]] * ck[x * r + j];
  let kappa = 0;
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) kappa += cl[x * nt + y] * K[T[y] * m + T[x]];
  const nTerms = group.terms.length;
  const n: Float64Array[] = [];
  const tau1: Float64Array[] = [];
  const tau0 = new Float64Array(nTerms);
  const trK = new Float64Array(nTerms);
  group.terms.forEach((term, k) => {
    const nk = new Float64Array(ne * ne);
    const t1 = new Float64Array(ne);
    for (const z of term.positions) {
      const j = R[z];
      trK[k] += K[j * m + j];
      tau0[k] += kck[z * r + z];
      for (let a = 0; a < ne; a++) {
        t1[a] += f[j * ne + a] * kcf[z * ne + a];
        for (let b = 0; b < ne; b++) nk[a * ne + b] += f[j * ne + a] * f[j * ne + b];
      }
    }
    n.push(nk);
    tau1.push(t1);
  });
  return { nt, ne, r, cl, fcf, kappa, kcf, kck, n, tau0, tau1, trK };
}

/**
 * The trial's residual parameter: P_si = K_TT / s^2 + sum_a c2_a F_Ta F_Ta', its diagonal E entry
 * (n - ne) / s^2 + sum_a (s + lambda_a)^-2 - 2 (kappa / s^3 + sum_a c3_a phi_a), and with each term k
 *   tr(Z_k'V^-2 Z_k)           = trK_k / s^2 + sum_a c2_a N^k_aa
 *   sum_z H2_zT C H_Tz         = tau0_k / s^3 + sum_b (c1_b / s^2 + c2_b / s) tau1_kb + sum_ab c2_a c1_b N^k_ab FCF_ab.
 */
function residualTerms(frame: ModelFrame, group: SpectralGroup, state: SpectralState, dp: DesignPieces, e: number, s: number, coef: Float64Array, P: Float64Array[], expected: SymmetricArrowhead): void {
  const t = frame.stats.trials[group.trials[e]];
  const m = t.m;
  const K = t.gram;
  const T = t.fixedColumns;
  const tg = t.fixedIndex;
  const { nt, ne } = dp;
  const f = state.f;
  const p = frame.stats.fixed.length;
  const nP = frame.layout.parameters.length;
  const sig = group.residualParameter[e];
  const s2 = s * s;
  const pr = P[sig];
  for (let x = 0; x < nt; x++)
    for (let y = x; y < nt; y++) {
      let v = K[T[x] * m + T[y]] / s2;
      for (let a = 0; a < ne; a++) v += coef[ne + a] * f[T[x] * ne + a] * f[T[y] * ne + a];
      pr[tg[x] * p + tg[y]] += v;
      if (x !== y) pr[tg[y] * p + tg[x]] += v;
    }
  let ess = (t.n - ne) / s2 - (2 * dp.kappa) / (s2 * s);
  for (let a = 0; a < ne; a++) {
    const sl = s + state.lambda[a];
    ess += 1 / (sl * sl) - 2 * coef[2 * ne + a] * dp.fcf[a * ne + a];
  }
  expected.addSymmetric(sig, sig, ess);
  group.terms.forEach((term, k) => {
    const nk = dp.n[k];
    const t1 = dp.tau1[k];
    let trV2 = dp.trK[k] / s2;
    let cq = dp.tau0[k] / (s2 * s);
    for (let a = 0; a < ne; a++) {
      trV2 += coef[ne + a] * nk[a * ne + a];
      cq += (coef[a] / s2 + coef[ne + a] / s) * t1[a];
      let row = 0;
      for (let b = 0; b < ne; b++) row += coef[b] * nk[a * ne + b] * dp.fcf[a * ne + b];
      cq += coef[ne + a] * row;
    }
    const v = trV2 - 2 * cq;
    expected.addSymmetric(term.parameter, sig, v);
  });
}

/** The trial's share of the group sums (upper triangles / a <= b <= c only). */
function accumulate(L: SumLayout, ne: number, s: number, coef: Float64Array, sums: Float64Array): void {
  const is = 1 / s;
  sums[L.s2] += is * is;
  sums[L.s3] += is * is * is;
  for (let a = 0; a < ne; a++) {
    const ca = coef[a];
    sums[L.psi + a] += ca * is;
    sums[L.omega + a] += ca * is * is;
    for (let b = a; b < ne; b++) {
      const cab = ca * coef[b];
      sums[L.gamma + a * ne + b] += cab;
      sums[L.gammaS + a * ne + b] += cab * is;
      const o = L.gamma3 + (a * ne + b) * ne;
      for (let c = b; c < ne; c++) sums[o + c] += cab * coef[c];
    }
  }
}

/** Fills the lower triangles of Gamma, GammaS and every permutation of Gamma3 from the sums taken over a <= b <= c. */
function symmetriseSums(L: SumLayout, ne: number, sums: Float64Array): void {
  for (let a = 0; a < ne; a++)
    for (let b = 0; b < a; b++) {
      sums[L.gamma + a * ne + b] = sums[L.gamma + b * ne + a];
      sums[L.gammaS + a * ne + b] = sums[L.gammaS + b * ne + a];
    }
  const g = L.gamma3;
  for (let a = 0; a < ne; a++)
    for (let b = 0; b < ne; b++)
      for (let c = 0; c < ne; c++) {
        // sorted indices x <= y <= z
        let x = a;
        let y = b;
        let z = c;
        if (x > y) [x, y] = [y, x];
        if (y > z) [y, z] = [z, y];
        if (x > y) [x, y] = [y, x];
        sums[g + (a * ne + b) * ne + c] = sums[g + (x * ne + y) * ne + z];
      }
}

/**
 * The random terms' P_k and E_kl from the group sums. With KF = K_kl F_l (x in k) and
 * G^k_ab = sum_{x in k} F_xa KCF_xb:
 *   P_k      = S2 sum_j K_Tj K_Tj' + sum_a psi_a (F_Ta m_ka' + m_ka F_Ta') + sum_ab Gamma_ab N^k_ab F_Ta F_Tb',  m_ka = sum_j F_ja K_Tj
 *   trVV_kl  = S2 |K_kl|^2 + 2 sum_a psi_a (F_k'K_kl F_l)_aa + sum_ab Gamma_ab N^k_ab N^l_ab
 *   trCQ_kl  = S3 sum_xy K_xy KCK_yx + sum_b omega_b A2_b + sum_bc GammaS_bc FCF_bc (F_k'K_kl F_l)_cb
 *            + sum_a omega_a (F_k' KCK_kl F_l)_aa + sum_ab GammaS_ab (G^k_ab N^l_ab + N^k_ab G^l_ab)
 *            + sum_abc Gamma3_abc FCF_bc N^k_ac N^l_ab,
 *   A2_b     = sum_{x in k} KCF_xb (K_kl F_l)_xb + sum_{y in l} KCF_yb (K_lk F_k)_yb.
 */
function termTerms(frame: ModelFrame, group: SpectralGroup, state: SpectralState, dp: DesignPieces, L: SumLayout, sums: Float64Array, P: Float64Array[], expected: SymmetricArrowhead): void {
  const { m, K, R, T, tg, nt } = groupLayout(frame.stats, group);
  const { rank: ne, f } = state;
  const p = frame.stats.fixed.length;
  const nP = frame.layout.parameters.length;
  const terms = group.terms;
  // G^k (ne x ne) per term
  const gk = terms.map((term) => {
    const out = new Float64Array(ne * ne);
    for (const x of term.positions) for (let a = 0; a < ne; a++) for (let b = 0; b < ne; b++) out[a * ne + b] += f[R[x] * ne + a] * dp.kcf[x * ne + b];
    return out;
  });
  terms.forEach((term, k) => {
    const nk = dp.n[k];
    // m_ka (nt x ne) and KK = sum_j K_Tj K_Tj'
    const mk = new Float64Array(nt * ne);
    const kk = new Float64Array(nt * nt);
    for (const z of term.positions) {
      const j = R[z];
      for (let x = 0; x < nt; x++) {
        const kx = K[T[x] * m + j];
        if (kx === 0) continue;
        for (let a = 0; a < ne; a++) mk[x * ne + a] += f[j * ne + a] * kx;
        for (let y = 0; y < nt; y++) kk[x * nt + y] += kx * K[T[y] * m + j];
      }
    }
    const target = P[term.parameter];
    for (let x = 0; x < nt; x++)
      for (let y = 0; y < nt; y++) {
        let v = sums[L.s2] * kk[x * nt + y];
        for (let a = 0; a < ne; a++) {
          v += sums[L.psi + a] * (f[T[x] * ne + a] * mk[y * ne + a] + mk[x * ne + a] * f[T[y] * ne + a]);
          let row = 0;
          for (let b = 0; b < ne; b++) row += sums[L.gamma + a * ne + b] * nk[a * ne + b] * f[T[y] * ne + b];
          v += f[T[x] * ne + a] * row;
        }
        target[tg[x] * p + tg[y]] += v;
      }
  });
  for (let k = 0; k < terms.length; k++)
    for (let l = k; l < terms.length; l++) {
      const v = pairExpected(group, state, dp, L, sums, K, m, k, l, gk);
      const A = terms[k].parameter;
      const B = terms[l].parameter;
      expected.addSymmetric(A, B, v);
    }
}

/** E_kl for random terms k, l (see termTerms). */
function pairExpected(group: SpectralGroup, state: SpectralState, dp: DesignPieces, L: SumLayout, sums: Float64Array, K: Float64Array, m: number, k: number, l: number, gk: Float64Array[]): number {
  const R = group.randomColumns;
  const r = R.length;
  const { ne } = dp;
  const f = state.f;
  const pk = group.terms[k].positions;
  const pl = group.terms[l].positions;
  const nk = dp.n[k];
  const nl = dp.n[l];
  // KFl[x] = (K_kl F_l)_x. (x in k), KFk[y] = (K_lk F_k)_y. (y in l), FKF = F_k' K_kl F_l, FKCKF = F_k' KCK_kl F_l
  const kfl = new Float64Array(pk.length * ne);
  const kfk = new Float64Array(pl.length * ne);
  let kSq = 0;
  let a1 = 0;
  for (let xi = 0; xi < pk.length; xi++)
    for (let yi = 0; yi < pl.length; yi++) {
      const kxy = K[R[pk[xi]] * m + R[pl[yi]]];
      kSq += kxy * kxy;
      a1 += kxy * dp.kck[pl[yi] * r + pk[xi]];
      if (kxy === 0) continue;
      for (let a = 0; a < ne; a++) {
        kfl[xi * ne + a] += kxy * f[R[pl[yi]] * ne + a];
        kfk[yi * ne + a] += kxy * f[R[pk[xi]] * ne + a];
      }
    }
  const fkf = new Float64Array(ne * ne);
  for (let xi = 0; xi < pk.length; xi++) for (let a = 0; a < ne; a++) for (let b = 0; b < ne; b++) fkf[a * ne + b] += f[R[pk[xi]] * ne + a] * kfl[xi * ne + b];
  let trVV = sums[L.s2] * kSq;
  let trCQ = sums[L.s3] * a1;
  for (let a = 0; a < ne; a++) {
    trVV += 2 * sums[L.psi + a] * fkf[a * ne + a];
    // A2_a and (F_k' KCK_kl F_l)_aa
    let a2 = 0;
    for (let xi = 0; xi < pk.length; xi++) a2 += dp.kcf[pk[xi] * ne + a] * kfl[xi * ne + a];
    for (let yi = 0; yi < pl.length; yi++) a2 += dp.kcf[pl[yi] * ne + a] * kfk[yi * ne + a];
    let a4 = 0;
    for (let xi = 0; xi < pk.length; xi++) {
      let s = 0;
      for (let yi = 0; yi < pl.length; yi++) s += dp.kck[pk[xi] * r + pl[yi]] * f[R[pl[yi]] * ne + a];
      a4 += f[R[pk[xi]] * ne + a] * s;
    }
    trCQ += sums[L.omega + a] * (a2 + a4);
    for (let b = 0; b < ne; b++) {
      const ab = a * ne + b;
      trVV += sums[L.gamma + ab] * nk[ab] * nl[ab];
      trCQ += sums[L.gammaS + ab] * (dp.fcf[ab] * fkf[b * ne + a] + gk[k][ab] * nl[ab] + nk[ab] * gk[l][ab]);
      let cubic = 0;
      const g3 = L.gamma3 + ab * ne;
      for (let c = 0; c < ne; c++) cubic += sums[g3 + c] * dp.fcf[b * ne + c] * nk[a * ne + c];
      trCQ += cubic * nl[ab];
    }
  }
  return trVV - 2 * trCQ;
}
