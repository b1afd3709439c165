// Score and average-information terms (remlDerivatives.ts) for the trials of one spectral
// group, from the group's decomposition (spectralEvaluation.ts). With s the trial's residual
// variance, rho = (-beta_T, 1) and e_a = g_a - F_Ta'beta (the trial's residual projected on q_a):
//   h   = Z'V^-1 r = (K rho) / s   + sum_a c1_a F_a e_a        (random rows)
//   h2  = Z'V^-2 r = (K rho) / s^2 + sum_a c2_a F_a e_a
//   r'V^-k r      = rho'K rho / s^k + sum_a ck_a e_a^2
//   tr(V^-1)      = (n - r) / s + sum_a 1 / (s + lambda_a)
// with ck_a = ((s + lambda_a)^-k - s^-k) / lambda_a written without the division (finite at
// lambda_a = 0). The random terms' traces tr(C X'V^-1 V_k V^-1 X) are sums over trials of
// quadratics in c1, so the trials contribute sums of 1/s^2, c1_a/s and c1_a c1_b and the
// design matrices enter once per group.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { groupLayout, type SpectralGroup } from './spectralGroups.js';
import type { SpectralState } from './spectralEvaluation.js';
import { Scratch } from './arena.js';
import type { SymmetricArrowhead } from './arrowhead.js';

export interface ScoreTargets {
  readonly trace: Float64Array;
  readonly quadratic: Float64Array;
  /** a0, filled when `information` (the EM steps take the score alone). */
  readonly ai: SymmetricArrowhead;
  readonly information: boolean;
  /** Per residual parameter, its expected information less tr(C P_k C P_k) (see ScoreAndInformation.residualExpected). */
  readonly residualExpected: Float64Array;
  readonly v: Float64Array;
}

/** Design-level pieces of one group at one evaluation (depend on beta and C, not on a trial). */
interface GroupPieces {
  /** Random columns and eigen-directions kept (SpectralState.rank). */
  readonly r: number;
  readonly ne: number;
  readonly nt: number;
  /** F_Ta'beta (ne), K_RT beta (r), K_TT beta (nt), beta'K_TT beta. */
  readonly fb: Float64Array;
  readonly kbR: Float64Array;
  readonly kbT: Float64Array;
  readonly bKb: number;
  /** phi_a = F_Ta' C F_Ta (ne) and kappa = tr(C K_TT). */
  readonly phi: Float64Array;
  readonly kappa: number;
}

const pieceScratch = new Scratch();
const clScratch = new Scratch();
const fcScratch = new Scratch();
const trialScratch = new Scratch();
const sumScratch = new Scratch();
const termScratch = new Scratch();

// Layout of the group sums: S1 = sum 1/s, S2 = sum 1/s^2, alpha = sum c1, psi = sum c1/s,
// Gamma = sum c1 c1' (upper triangle), then for v: vh = sum h/s (r), vw = sum c1 w (terms x ne).
const S1 = 0;
const S2 = 1;
const ALPHA = 2;
const psiAt = (ne: number): number => 2 + ne;
const gammaAt = (ne: number): number => 2 + 2 * ne;
const vhAt = (ne: number): number => 2 + 2 * ne + ne * ne;
const vwAt = (ne: number, r: number): number => vhAt(ne) + r;

export function spectralScore(frame: ModelFrame, ev: Evaluation, gi: number, out: ScoreTargets): void {
  const group = frame.spectral[gi];
  const state = (ev.spectral as readonly SpectralState[])[gi];
  const stats = frame.stats;
  const t0 = stats.trials[group.representative];
  const p = stats.fixed.length;
  const r = group.randomColumns.length;
  const ne = state.rank;
  const nt = t0.fixedColumns.length;
  const cl = clScratch.get(nt * nt);
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) cl[x * nt + y] = ev.c[t0.fixedIndex[x] * p + t0.fixedIndex[y]];
  const fc = fcScratch.get(ne * nt);
  const pieces = groupPieces(frame, group, state, ev.beta, cl, fc);
  const nTerms = group.terms.length;
  const nSums = vwAt(ne, r) + nTerms * ne;
  const sums = sumScratch.get(nSums);
  sums.fill(0, 0, nSums);
  const work = trialScratch.get(workSize(ne, r, nTerms));
  const information = out.information;
  for (let e = 0; e < group.trials.length; e++) {
    trialScore(frame, ev, group, state, pieces, e, work, sums, out);
    if (information) trialInformation(frame, ev, group, state, pieces, e, work, sums, out);
  }
  termTraces(frame, group, state, pieces, cl, fc, sums, out.trace);
  if (information) termLinear(frame, group, state, sums, out.v);
}

function groupPieces(frame: ModelFrame, group: SpectralGroup, state: SpectralState, beta: Float64Array, cl: Float64Array, fc: Float64Array): GroupPieces {
  const { m, K, R, r, T, tg, nt } = groupLayout(frame.stats, group);
  const { rank: ne, f } = state;
  const buf = pieceScratch.get(2 * ne + r + nt);
  const fb = buf.subarray(0, ne);
  const phi = buf.subarray(ne, 2 * ne);
  const kbR = buf.subarray(2 * ne, 2 * ne + r);
  const kbT = buf.subarray(2 * ne + r, 2 * ne + r + nt);
  for (let a = 0; a < ne; a++) {
    let s = 0;
    for (let x = 0; x < nt; x++) s += f[T[x] * ne + a] * beta[tg[x]];
    fb[a] = s;
  }
  for (let b = 0; b < r; b++) {
    let s = 0;
    for (let x = 0; x < nt; x++) s += K[R[b] * m + T[x]] * beta[tg[x]];
    kbR[b] = s;
  }
  let bKb = 0;
  for (let x = 0; x < nt; x++) {
    let s = 0;
    for (let y = 0; y < nt; y++) s += K[T[x] * m + T[y]] * beta[tg[y]];
    kbT[x] = s;
    bKb += beta[tg[x]] * s;
  }
  // fc = F_T' C (ne x nt); phi_a = (F_T' C F_T)_aa; kappa = tr(C K_TT)
  for (let a = 0; a < ne; a++)
    for (let x = 0; x < nt; x++) {
      let s = 0;
      for (let y = 0; y < nt; y++) s += f[T[y] * ne + a] * cl[y * nt + x];
      fc[a * nt + x] = s;
    }
  for (let a = 0; a < ne; a++) {
    let s = 0;
    for (let x = 0; x < nt; x++) s += fc[a * nt + x] * f[T[x] * ne + a];
    phi[a] = s;
  }
  let kappa = 0;
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) kappa += cl[x * nt + y] * K[T[y] * m + T[x]];
  return { r, ne, nt, fb, kbR, kbT, bKb, phi, kappa };
}

// Layout of a trial's working array: c1, c2, c3, e, c1 e (ne each), h, K rho (r each on the
// random rows), w (terms x ne), the terms' K-products (terms x terms), then r'V^-3 r.
const C1 = 0;
const c2At = (ne: number): number => ne;
const c3At = (ne: number): number => 2 * ne;
const eAt = (ne: number): number => 3 * ne;
const ceAt = (ne: number): number => 4 * ne;
const hAt = (ne: number): number => 5 * ne;
const krAt = (ne: number, r: number): number => 5 * ne + r;
const wAt = (ne: number, r: number): number => 5 * ne + 2 * r;
const ttAt = (ne: number, r: number, nTerms: number): number => wAt(ne, r) + nTerms * ne;
const cubeAt = (ne: number, r: number, nTerms: number): number => ttAt(ne, r, nTerms) + nTerms * nTerms;
const workSize = (ne: number, r: number, nTerms: number): number => cubeAt(ne, r, nTerms) + 1;

/** One trial's score terms: its residual's trace and quadratic, the random terms' quadratics, its share of the group sums. */
function trialScore(frame: ModelFrame, ev: Evaluation, group: SpectralGroup, state: SpectralState, pc: GroupPieces, e: number, work: Float64Array, sums: Float64Array, out: ScoreTargets): void {
  const ti = frame.stats.trials[group.trials[e]];
  const m = ti.m;
  const mz = m - 1;
  const K = ti.gram;
  const R = group.randomColumns;
  const { r, ne, nt } = pc;
  const T = ti.fixedColumns;
  const tg = ti.fixedIndex;
  const { lambda, f, g } = state;
  const beta = ev.beta;
  const s = ev.theta[group.residualParameter[e]];
  const sig = group.residualParameter[e];
  const nTerms = group.terms.length;
  let rKr = K[m * m - 1] + pc.bKb;
  for (let x = 0; x < nt; x++) rKr -= 2 * K[T[x] * m + mz] * beta[tg[x]];
  let quadRes = rKr / (s * s);
  let cubeRes = rKr / (s * s * s);
  let traceRes = (ti.n - ne) / s - pc.kappa / (s * s);
  // tr(V^-2) - 2 tr(C X'V^-3 X), the expected information's own part
  let expectedRes = (ti.n - ne) / (s * s) - (2 * pc.kappa) / (s * s * s);
  const c2o = c2At(ne);
  const c3o = c3At(ne);
  const eo = eAt(ne);
  const ceo = ceAt(ne);
  for (let a = 0; a < ne; a++) {
    const l = lambda[a];
    const sl = s + l;
    const c1 = -1 / (s * sl);
    const c2 = -(2 * s + l) / (s * s * sl * sl);
    const c3 = -(3 * s * s + 3 * s * l + l * l) / (s * s * s * sl * sl * sl);
    work[C1 + a] = c1;
    work[c2o + a] = c2;
    work[c3o + a] = c3;
    const ea = g[e * ne + a] - pc.fb[a];
    work[eo + a] = ea;
    work[ceo + a] = c1 * ea;
    quadRes += c2 * ea * ea;
    cubeRes += c3 * ea * ea;
    traceRes += 1 / sl - c2 * pc.phi[a];
    expectedRes += 1 / (sl * sl) - 2 * c3 * pc.phi[a];
  }
  out.residualExpected[sig] = expectedRes;
  work[cubeAt(ne, r, nTerms)] = cubeRes;
  out.quadratic[sig] += quadRes;
  out.trace[sig] += traceRes;
  randomRows(K, m, mz, R, f, ne, r, s, pc.kbR, work);
  const ho = hAt(ne);
  for (let k = 0; k < nTerms; k++) {
    const pos = group.terms[k].positions;
    let q = 0;
    for (let x = 0; x < pos.length; x++) q += work[ho + pos[x]] * work[ho + pos[x]];
    out.quadratic[group.terms[k].parameter] += q;
  }
  accumulateSums(s, ne, work, sums);
}

/** K rho and h = Z_R'V^-1 r = (K rho) / s + sum_a F_Ra c1_a e_a on the random rows, into the working array. */
function randomRows(K: Float64Array, m: number, mz: number, R: Int32Array, f: Float64Array, ne: number, r: number, s: number, kbR: Float64Array, work: Float64Array): void {
  const ceo = ceAt(ne);
  const ho = hAt(ne);
  const kro = krAt(ne, r);
  for (let j = 0; j < r; j++) {
    const kr = K[R[j] * m + mz] - kbR[j];
    let h = kr / s;
    const fo = R[j] * ne;
    for (let a = 0; a < ne; a++) h += f[fo + a] * work[ceo + a];
    work[ho + j] = h;
    work[kro + j] = kr;
  }
}

/** S1 += 1/s, S2 += 1/s^2, alpha += c1, psi += c1 / s, Gamma += c1 c1' (Gamma's upper triangle). */
function accumulateSums(s: number, ne: number, work: Float64Array, sums: Float64Array): void {
  sums[S1] += 1 / s;
  sums[S2] += 1 / (s * s);
  const psi = psiAt(ne);
  const gamma = gammaAt(ne);
  for (let a = 0; a < ne; a++) {
    const c1 = work[C1 + a];
    sums[ALPHA + a] += c1;
    sums[psi + a] += c1 / s;
    for (let b = a; b < ne; b++) sums[gamma + a * ne + b] += c1 * work[C1 + b];
  }
}

/**
 * The trial's AI entries among the random terms and with its residual, and its share of v's
 * sums. With w_ka = F_ka . h_k (F on term k's rows):
 *   h_k'H_kl h_l = h_k'K_kl h_l / s + sum_a c1_a w_ka w_la,
 *   h_k . h2_k   = h_k . (K rho)_k / s^2 + sum_a c2_a e_a w_ka   (h2 = Z'V^-2 r).
 */
function trialInformation(frame: ModelFrame, ev: Evaluation, group: SpectralGroup, state: SpectralState, pc: GroupPieces, e: number, work: Float64Array, sums: Float64Array, out: ScoreTargets): void {
  const ti = frame.stats.trials[group.trials[e]];
  const s = ev.theta[group.residualParameter[e]];
  const ai = out.ai;
  const R = group.randomColumns;
  const { r, ne } = pc;
  const nP = frame.layout.parameters.length;
  const f = state.f;
  const terms = group.terms;
  const nTerms = terms.length;
  const h = hAt(ne);
  const kro = krAt(ne, r);
  const wo = wAt(ne, r);
  const tt = ttAt(ne, r, nTerms);
  const c2o = c2At(ne);
  const eo = eAt(ne);
  const sig = group.residualParameter[e];
  for (let i = 0; i < nTerms * ne; i++) work[wo + i] = 0;
  for (let i = 0; i < nTerms * nTerms; i++) work[tt + i] = 0;
  const termOf = group.termOfPosition;
  for (let x = 0; x < r; x++) {
    const hx = work[h + x];
    const o = wo + termOf[x] * ne;
    const fo = R[x] * ne;
    for (let a = 0; a < ne; a++) work[o + a] += f[fo + a] * hx;
  }
  // h_k'K_kl h_l over the nonzero entries of K_RR
  const nz = group.kNonzero;
  for (let z = 0; z < nz.value.length; z++) {
    const x = nz.x[z];
    const y = nz.y[z];
    work[tt + termOf[x] * nTerms + termOf[y]] += work[h + x] * nz.value[z] * work[h + y];
  }
  const vh = vhAt(ne);
  const vw = vwAt(ne, r);
  for (let j = 0; j < r; j++) sums[vh + j] += work[h + j] / s;
  for (let k = 0; k < nTerms; k++) {
    const A = terms[k].parameter;
    const pk = terms[k].positions;
    for (let a = 0; a < ne; a++) sums[vw + k * ne + a] += work[C1 + a] * work[wo + k * ne + a];
    for (let l = k; l < nTerms; l++) {
      const B = terms[l].parameter;
      let val = work[tt + k * nTerms + l] / s;
      for (let a = 0; a < ne; a++) val += work[C1 + a] * work[wo + k * ne + a] * work[wo + l * ne + a];
      ai.addSymmetric(A, B, val);
    }
    let hk = 0;
    for (let x = 0; x < pk.length; x++) hk += work[h + pk[x]] * work[kro + pk[x]];
    let hr = hk / (s * s);
    for (let a = 0; a < ne; a++) hr += work[c2o + a] * work[eo + a] * work[wo + k * ne + a];
    ai.addSymmetric(A, sig, hr);
  }
  ai.addSymmetric(sig, sig, work[cubeAt(ne, r, nTerms)]);
  residualLinear(ti, state, pc, s, work, out.v, sig * frame.stats.fixed.length);
}

/** v of the trial's residual: X_i'V_i^-2 r_i = (K rho)_T / s^2 + sum_a c2_a F_Ta e_a. */
function residualLinear(ti: ModelFrame['stats']['trials'][number], state: SpectralState, pc: GroupPieces, s: number, work: Float64Array, v: Float64Array, vo: number): void {
  const m = ti.m;
  const K = ti.gram;
  const T = ti.fixedColumns;
  const tg = ti.fixedIndex;
  const f = state.f;
  const ne = pc.ne;
  const c2o = c2At(ne);
  const eo = eAt(ne);
  for (let x = 0; x < T.length; x++) {
    let sum = (K[T[x] * m + m - 1] - pc.kbT[x]) / (s * s);
    const fo = T[x] * ne;
    for (let a = 0; a < ne; a++) sum += work[c2o + a] * f[fo + a] * work[eo + a];
    v[vo + tg[x]] += sum;
  }
}

/**
 * The random terms' traces tr(P V_k) = tr(V^-1 V_k) - tr(C X'V^-1 V_k V^-1 X), summed over the
 * group's trials: with H_Tj = K_Tj / s + sum_a c1_a F_ja F_Ta,
 *   sum_j in k  H_Tj' C H_Tj = tau0_k / s^2 + 2 sum_a (c1_a / s) tau1_ka + sum_ab c1_a c1_b tau2_kab.
 */
function termTraces(frame: ModelFrame, group: SpectralGroup, state: SpectralState, pc: GroupPieces, cl: Float64Array, fc: Float64Array, sums: Float64Array, trace: Float64Array): void {
  const { m, K, R, T, nt } = groupLayout(frame.stats, group);
  const { rank: ne, f } = state;
  const psi = psiAt(ne);
  const gamma = gammaAt(ne);
  const ck = termScratch.get(nt + ne * ne);
  // fcf = F_T' C F_T (ne x ne) after the nt entries of ck's head
  const FCF = nt;
  for (let a = 0; a < ne; a++)
    for (let b = 0; b < ne; b++) {
      let s = 0;
      for (let x = 0; x < nt; x++) s += fc[a * nt + x] * f[T[x] * ne + b];
      ck[FCF + a * ne + b] = s;
    }
  for (const term of group.terms) {
    const pos = term.positions;
    let trVk = 0;
    let tau0 = 0;
    let tau1 = 0;
    let tau2 = 0;
    for (let x = 0; x < pos.length; x++) {
      const j = R[pos[x]];
      trVk += K[j * m + j] * sums[S1];
      for (let a = 0; a < ne; a++) trVk += sums[ALPHA + a] * f[j * ne + a] * f[j * ne + a];
      // C K_Tj into ck[0 .. nt)
      for (let y = 0; y < nt; y++) {
        let s = 0;
        for (let z = 0; z < nt; z++) s += cl[y * nt + z] * K[T[z] * m + j];
        ck[y] = s;
      }
      for (let y = 0; y < nt; y++) tau0 += K[T[y] * m + j] * ck[y];
      for (let a = 0; a < ne; a++) {
        let fcK = 0;
        for (let y = 0; y < nt; y++) fcK += f[T[y] * ne + a] * ck[y];
        tau1 += sums[psi + a] * f[j * ne + a] * fcK;
        for (let b = a; b < ne; b++) {
          const v = sums[gamma + a * ne + b] * f[j * ne + a] * f[j * ne + b] * ck[FCF + a * ne + b];
          tau2 += a === b ? v : 2 * v;
        }
      }
    }
    trace[term.parameter] += trVk - (tau0 * sums[S2] + 2 * tau1 + tau2);
  }
}

/** v of the random terms: sum over trials of K_T,k h_k / s + sum_a c1_a (F_ka . h_k) F_Ta. */
function termLinear(frame: ModelFrame, group: SpectralGroup, state: SpectralState, sums: Float64Array, v: Float64Array): void {
  const { m, K, R, r, T, tg } = groupLayout(frame.stats, group);
  const { rank: ne, f } = state;
  const p = frame.stats.fixed.length;
  const vh = vhAt(ne);
  const vw = vwAt(ne, r);
  group.terms.forEach((term, k) => {
    const pos = term.positions;
    for (let x = 0; x < T.length; x++) {
      let s = 0;
      for (let y = 0; y < pos.length; y++) s += K[T[x] * m + R[pos[y]]] * sums[vh + pos[y]];
      for (let a = 0; a < ne; a++) s += f[T[x] * ne + a] * sums[vw + k * ne + a];
      v[term.parameter * p + tg[x]] += s;
    }
  });
}
