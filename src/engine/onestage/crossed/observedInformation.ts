// The exact observed information of the crossed model's REML criterion in the log variance ratios
// phi_k = log gamma_k at a fixed residual variance sigma² (the Hessian the Satterthwaite df and the
// variances' SEs need), and the derivatives of each contrast's variance, both analytic — no
// refactoring at shifted parameters. With V_k = Z_k Z_k' (residual units) and P as in
// crossedDerivatives.ts,
//   d²F/dphi_k dphi_l = gamma_k gamma_l (2 y'P V_k P V_l P y / sigma² - tr(P V_k P V_l)) + [k = l] gamma_k dF/dgamma_k.
// The first part is the AI matrix's (its quadratic forms); the traces are |Z_k'P Z_l|²_F, from the
// mixed-model coefficient matrix C (A = [Z Lambda | X], H0 the within-trial part):
// - a shared term (site, year and their treatment interactions, columns E_k of C): P Z_k =
//   H0^-1 A C^-1 E_k / theta_k, so gamma_k gamma_l |Z_k'P Z_l|² = tr(C^-1 E_k E_k' C^-1 E_l E_l')
//   + [k = l] (n_k - 2 tr C^kk);
// - a within-trial term (trial, block, treatment-by-trial): Z_k'P Z_l = Z_k'H0^-1 Z_l - F_k'C^-1 F_l
//   with F_k = A'H0^-1 Z_k, whose first part is block-diagonal by trial.
// Every remaining piece is tr(C^-1 Phi_a C^-1 Phi_b) with Phi_a = E_a E_a' (shared) or
// gamma_a F_a F_a' (within), all with the arrowhead's pattern (site blocks, their coupling to the
// border, the border). For L the arrowhead factor of C, Psi_a = L^-1 Phi_a L^-T keeps that pattern,
// and tr(Psi_a Psi_b) = sum_s <Psi_ss^a, Psi_ss^b> + 2 sum_s tr(R_s^a S^-1 R_s^b') + tr(S^-1 Omega_a S^-1 Omega_b)
// with, per site, Psi_ss = L_s^-1 Phi_ss L_s^-T, R_s = L_s^-1 Phi_sB - Psi_ss W_s, and
// Omega = Phi_BB - sum_s (W_s'R_s + R_s'W_s + W_s'Psi_ss W_s), S^-1 the border block of C^-1
// (already in the selected inverse). Cost: one pass over the trials and a few small products per
// site — about one gradient pass, against one per variance ratio for finite differences.
// Contrast variances c = l'(X'H^-1X)^-1 l: with x = C^-1 [0; l], gamma_k dc/dgamma_k = |x_k|² for a
// shared term and gamma_k sum_i (M_i x)' S_k,i (M_i x) for a within-trial one (S as in layoutMoments.ts).
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { pack, type CrossedEvaluation, type LayoutFactor, type PackedColumns } from './crossedLikelihood.js';
import { layoutMoments, type LayoutMoments } from './layoutMoments.js';
import type { CrossedDerivatives } from './crossedDerivatives.js';
import { backSolveTranspose, forwardSolveColumns } from './denseSmall.js';
import type { CrossedTerm } from './terms.js';

export interface ObservedInformation {
  /** d²F/dphi_k dphi_l over all terms (terms x terms, row-major), sigma² held fixed. */
  readonly hessian: Float64Array;
  /** Per contrast, gamma_k dc/dgamma_k (c in residual units: l'(X'H^-1X)^-1 l). */
  readonly contrastGradient: Float64Array[];
}

type Within = 'trial' | 'block' | 'treatment-by-trial';
const WITHIN: readonly Within[] = ['trial', 'block', 'treatment-by-trial'];
const momentKey = { trial: 'trial', block: 'block', 'treatment-by-trial': 'treatment' } as const;

/** Per layout: the moments, and for within-term pairs |G_ab|² and G_Kb G_ba G_aK (G = J'H0^-1 J). */
interface LayoutPairs {
  readonly mo: LayoutMoments;
  /** S of each within-trial term, in the order of `within`. */
  readonly s: Float64Array[];
  readonly local: Float64Array;
  readonly n: Float64Array[];
}

/** Everything one pass over the sites reads and accumulates (built once; the loops are small functions V8 optimises). */
interface Pass {
  readonly d: CrossedData;
  readonly L: CrossedLayout;
  readonly ev: CrossedEvaluation;
  readonly inv: CrossedDerivatives['inverse'];
  readonly m: number;
  readonly nb: number;
  readonly bs: number;
  readonly nT: number;
  readonly gamma: Float64Array;
  readonly within: readonly Within[];
  readonly wIndex: readonly number[];
  /** Shared site terms: index and offsets in a site's block; then all terms with a site part. */
  readonly siteShared: readonly { readonly k: number; readonly offs: readonly number[] }[];
  readonly siteTerms: readonly number[];
  readonly columns: readonly PackedColumns[];
  readonly trialsOfSite: readonly number[][];
  readonly layouts: Map<LayoutFactor, LayoutPairs>;
  readonly xBorder: readonly Float64Array[];
  readonly contrastGradient: Float64Array[];
  readonly quad: Float64Array;
  readonly local: Float64Array;
  readonly mixed: Float64Array;
  readonly omega: Float64Array[];
  // per-site scratch
  readonly phiSS: Float64Array[];
  readonly phiSB: Float64Array[];
  readonly psi: Float64Array[];
  readonly rr: Float64Array[];
  readonly tt: Float64Array[];
  readonly xs: Float64Array[];
  readonly R: Float64Array;
  readonly mu: Float64Array;
  readonly mark: Uint8Array;
  readonly J: Int32Array;
  readonly sJ: Float64Array;
  readonly wJ: Float64Array;
  readonly xSB: Float64Array;
  readonly pw: Float64Array;
  readonly vv: Float64Array;
  readonly tmp: Float64Array;
  readonly ws: Float64Array;
  readonly xs2: Float64Array;
  readonly acc: Float64Array;
}

/** `sigma2`: the residual variance held fixed (default the profiled one at ev; the profile intervals hold another). */
export function observedInformation(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, der: CrossedDerivatives, ls: readonly Float64Array[], sigma2 = ev.sigma2): ObservedInformation {
  const nT = L.terms.length;
  const m = 1 + L.t;
  const nb = L.border - 1;
  const bs = L.bs;
  const { at } = L;
  const inv = der.inverse;
  const Sinv = inv.border;
  const gamma = Float64Array.from(ev.theta, (t) => t * t);
  const within = WITHIN.filter((w) => at[w] >= 0);
  const wIndex = within.map((w) => at[w]);
  // shared terms: their offsets in a site's block or in a year's part of the border
  const offsetsOf = (own: CrossedTerm, byTreatment: CrossedTerm) => {
    const out: { k: number; offs: number[] }[] = [];
    if (at[own] >= 0) out.push({ k: at[own], offs: [0] });
    if (at[byTreatment] >= 0) out.push({ k: at[byTreatment], offs: Array.from({ length: L.t }, (_, j) => (at[own] >= 0 ? 1 : 0) + j) });
    return out;
  };
  const siteShared = offsetsOf('site', 'treatment-by-site');
  const yearShared = offsetsOf('year', 'treatment-by-year');
  const columns: PackedColumns[] = [];
  for (let y = 0; y < L.nYears; y++) columns.push(pack(localColumns(L, y, ev.theta)));
  const trialsOfSite: number[][] = Array.from({ length: L.nSites }, () => []);
  d.trials.forEach((tr, i) => trialsOfSite[tr.site].push(i));
  // contrast directions x = C^-1 [0; l]: border part S^-1 e (site parts per site below)
  const xBorder = ls.map((l) => {
    const x = new Float64Array(nb);
    for (let i = 0; i < nb; i++) {
      let v = 0;
      for (let j = 0; j < L.p; j++) v += Sinv[i * nb + L.q + j] * l[j];
      x[i] = v;
    }
    return x;
  });
  const contrastGradient = ls.map(() => new Float64Array(nT));
  xBorder.forEach((x, c) => {
    for (const { k, offs } of yearShared) for (let y = 0; y < L.nYears; y++) for (const o of offs) contrastGradient[c][k] += x[y * L.by + o] ** 2;
  });
  const nS = siteShared.length + within.length;
  const blocks = (count: number, size: number) => Array.from({ length: count }, () => new Float64Array(size));
  const pass: Pass = {
    d, L, ev, inv, m, nb, bs, nT, gamma, within, wIndex, siteShared,
    siteTerms: [...siteShared.map((x) => x.k), ...wIndex],
    columns, trialsOfSite, layouts: new Map(), xBorder, contrastGradient,
    quad: new Float64Array(nT * nT), local: new Float64Array(nT * nT), mixed: new Float64Array(nT * nT), omega: blocks(nT, nb * nb),
    phiSS: blocks(within.length, bs * bs), phiSB: blocks(within.length, bs * nb),
    psi: blocks(nS, bs * bs), rr: blocks(nS, bs * nb), tt: blocks(nS, bs * nb), xs: blocks(ls.length, bs),
    R: new Float64Array(m * m), mu: new Float64Array(m), mark: new Uint8Array(nb), J: new Int32Array(nb),
    sJ: new Float64Array(nb * nb), wJ: new Float64Array(bs * nb), xSB: new Float64Array(bs * nb), pw: new Float64Array(bs * nb),
    vv: new Float64Array(bs * nb), tmp: new Float64Array(bs * bs), ws: new Float64Array(bs * nb), xs2: new Float64Array(bs * nb), acc: new Float64Array(nb * nb),
  };
  for (let s = 0; s < L.nSites; s++) sitePass(pass, s);
  const { quad, local, mixed, omega } = pass;

  // the border: Omega_a += Phi_BB (selectors for the year terms), Y_a = S^-1 Omega_a
  for (const { k, offs } of yearShared) for (let y = 0; y < L.nYears; y++) for (const o of offs) omega[k][(y * L.by + o) * nb + y * L.by + o] += 1;
  const Y = omega.map((om) => {
    const out = new Float64Array(nb * nb);
    multiply(Sinv, nb, nb, om, nb, out);
    return out;
  });
  for (let a = 0; a < nT; a++)
    for (let b = 0; b <= a; b++) {
      let v = 0;
      const ya = Y[a];
      const yb = Y[b];
      for (let i = 0; i < nb; i++) for (let j = 0; j < nb; j++) v += ya[i * nb + j] * yb[j * nb + i];
      quad[a * nT + b] += v;
    }

  // shared terms' own diagonal: n_k - 2 tr C^kk
  const extra = new Float64Array(nT);
  for (const { k, offs } of siteShared) {
    extra[k] = L.nSites * offs.length;
    for (let s = 0; s < L.nSites; s++) for (const o of offs) extra[k] -= 2 * inv.site[s][o * bs + o];
  }
  for (const { k, offs } of yearShared) {
    extra[k] = L.nYears * offs.length;
    for (let y = 0; y < L.nYears; y++) for (const o of offs) extra[k] -= 2 * Sinv[(y * L.by + o) * nb + y * L.by + o];
  }

  // Hessian: gamma gamma (2 Q / sigma² - E) + diag(gamma g), Q = y'P V_k P V_l P y from the AI matrix
  const hessian = new Float64Array(nT * nT);
  const isWithin = (k: number) => wIndex.includes(k);
  for (let k = 0; k < nT; k++)
    for (let l = 0; l <= k; l++) {
      let e = quad[k * nT + l];
      if (k === l) e += extra[k];
      if (isWithin(k) && isWithin(l)) e += gamma[k] * gamma[l] * (local[k * nT + l] - 2 * mixed[k * nT + l]);
      // Q from the AI matrix (which divides by the profiled sigma²); the gradient at the fixed sigma²
      const q = ev.sigma2 * der.information[k * nT + l] + (der.quadratic[k] * der.quadratic[l]) / ev.rHr;
      let h = gamma[k] * gamma[l] * ((2 * q) / sigma2) - e;
      if (k === l) h += gamma[k] * (der.trace[k] - der.quadratic[k] / sigma2);
      hessian[k * nT + l] = h;
      hessian[l * nT + k] = h;
    }
  return { hessian, contrastGradient };
}

/** One site: its trials' pieces, then each site-part term's Psi_ss, R_s, T_s and Omega update. */
function sitePass(c: Pass, s: number): void {
  const { d, bs, nb, columns, mark, J, L } = c;
  const trials = c.trialsOfSite[s];
  const w = c.ev.factor.siteW[s];
  const lsF = c.ev.factor.siteFactor[s];
  const B = L.border;
  // the border columns this site's trials touch (W_s and every Phi_sB vanish elsewhere)
  mark.fill(0);
  for (const i of trials) {
    const cols = columns[d.trials[i].year];
    for (let x = bs; x < cols.n; x++) mark[cols.index[x]] = 1;
  }
  let nJ = 0;
  for (let k = 0; k < nb; k++) if (mark[k]) J[nJ++] = k;
  for (const x of c.phiSS) x.fill(0);
  for (const x of c.phiSB) x.fill(0);
  // this site's part of the contrast directions, -L_s^-T W_s x_B
  for (let ci = 0; ci < c.xs.length; ci++) {
    const v = c.xs[ci];
    const xb = c.xBorder[ci];
    for (let r = 0; r < bs; r++) {
      let t = 0;
      for (let a = 0; a < nJ; a++) t -= w[r * B + J[a]] * xb[J[a]];
      v[r] = t;
    }
    backSolveTranspose(lsF, bs, bs, v);
    for (const { k, offs } of c.siteShared) for (const o of offs) c.contrastGradient[ci][k] += v[o] ** 2;
  }
  for (const i of trials) trialPass(c, i);
  if (bs === 0) return;
  const { sJ, wJ, ws } = c;
  const Sinv = c.inv.border;
  for (let a = 0; a < nJ; a++) for (let b = 0; b < nJ; b++) sJ[a * nJ + b] = Sinv[J[a] * nb + J[b]];
  for (let r = 0; r < bs; r++) for (let a = 0; a < nJ; a++) wJ[r * nJ + a] = w[r * B + J[a]];
  // W S^-1 once per site: T = R S^-1 = X S^-1 - Psi (W S^-1)
  multiply(wJ, bs, nJ, sJ, nJ, ws);
  const nShared = c.siteShared.length;
  for (let a = 0; a < c.siteTerms.length; a++) siteTerm(c, s, a, a < nShared ? c.siteShared[a].offs : null, nJ);
  const nS = c.siteTerms.length;
  for (let a = 0; a < nS; a++)
    for (let b = 0; b <= a; b++) {
      let v = 0;
      const pa = c.psi[a];
      const pb = c.psi[b];
      for (let x = 0; x < bs * bs; x++) v += pa[x] * pb[x];
      const ta = c.tt[a];
      const rb = c.rr[b];
      for (let x = 0; x < bs * nJ; x++) v += 2 * ta[x] * rb[x];
      const ka = c.siteTerms[a];
      const kb = c.siteTerms[b];
      c.quad[Math.max(ka, kb) * c.nT + Math.min(ka, kb)] += v;
    }
}

/** One trial: the within-term pair traces, Phi of the within terms, their contrast gradients. */
function trialPass(c: Pass, i: number): void {
  const { d, m, bs, nb, nT, within, wIndex, R, mu } = c;
  const nW = within.length;
  const tr = d.trials[i];
  const lf = c.ev.pieces[i].layout;
  let lp = c.layouts.get(lf);
  if (!lp) {
    lp = layoutPairs(layoutMoments(tr, lf, m), m, within);
    c.layouts.set(lf, lp);
  }
  const cols = c.columns[tr.year];
  trialInverse(c.L, c.inv, tr.site, cols, R);
  for (let a = 0; a < nW; a++)
    for (let b = 0; b <= a; b++) {
      const nab = lp.n[a * nW + b];
      let v = 0;
      for (let x = 0; x < m * m; x++) v += R[x] * nab[x];
      c.mixed[wIndex[a] * nT + wIndex[b]] += v;
      c.local[wIndex[a] * nT + wIndex[b]] += lp.local[a * nW + b];
    }
  for (let a = 0; a < nW; a++) scatterWithin(lp.s[a], c.gamma[wIndex[a]], cols, m, bs, nb, c.phiSS[a], c.phiSB[a], c.omega[wIndex[a]]);
  // contrast gradients of the within-trial terms: (M_i x)' S (M_i x)
  const { row, value, index, n: nc } = cols;
  for (let ci = 0; ci < c.xs.length; ci++) {
    mu.fill(0);
    const xb = c.xBorder[ci];
    const xv = c.xs[ci];
    for (let u = 0; u < nc; u++) mu[row[u]] += value[u] * (u < bs ? xv[index[u]] : xb[index[u]]);
    for (let a = 0; a < nW; a++) {
      const S = lp.s[a];
      let v = 0;
      for (let r = 0; r < m; r++) {
        let t = 0;
        for (let q = 0; q < m; q++) t += S[r * m + q] * mu[q];
        v += mu[r] * t;
      }
      c.contrastGradient[ci][wIndex[a]] += c.gamma[wIndex[a]] * v;
    }
  }
}

/** Term a of the site-part terms at site s (offs: its selector when shared, null when within-trial). */
function siteTerm(c: Pass, s: number, a: number, offs: readonly number[] | null, nJ: number): void {
  const { bs, nb, J, wJ, ws, tmp, pw, vv, xSB, xs2, acc } = c;
  const lsF = c.ev.factor.siteFactor[s];
  const p = c.psi[a];
  const rk = c.rr[a];
  const tk = c.tt[a];
  const wa = a - c.siteShared.length;
  // Psi_ss = L_s^-1 Phi_ss L_s^-T
  tmp.fill(0);
  if (offs) for (const o of offs) tmp[o * bs + o] = 1;
  else tmp.set(c.phiSS[wa]);
  forwardSolveColumns(lsF, bs, tmp, bs);
  for (let r = 0; r < bs; r++) for (let q = 0; q < bs; q++) p[q * bs + r] = tmp[r * bs + q];
  forwardSolveColumns(lsF, bs, p, bs);
  // R = X_sB - Psi W, V = X_sB - Psi W / 2 (so W'R + R'W + W'Psi W = W'V + V'W), T = R S^-1
  multiply(p, bs, bs, wJ, nJ, pw);
  multiply(p, bs, bs, ws, nJ, tk);
  const size = bs * nJ;
  if (offs) {
    for (let x = 0; x < size; x++) {
      rk[x] = -pw[x];
      vv[x] = -pw[x] / 2;
      tk[x] = -tk[x];
    }
  } else {
    // X_sB = L_s^-1 Phi_sB on the touched columns
    const sb = c.phiSB[wa];
    for (let r = 0; r < bs; r++) for (let q = 0; q < nJ; q++) xSB[r * nJ + q] = sb[r * nb + J[q]];
    forwardSolveColumns(lsF, bs, xSB, nJ);
    multiply(xSB, bs, nJ, c.sJ, nJ, xs2);
    for (let x = 0; x < size; x++) {
      rk[x] = xSB[x] - pw[x];
      vv[x] = xSB[x] - pw[x] / 2;
      tk[x] = xs2[x] - tk[x];
    }
  }
  // Omega -= W'V + V'W: upper triangle gathered, then scattered to both halves
  symmetricProduct(wJ, vv, bs, nJ, acc);
  const om = c.omega[c.siteTerms[a]];
  for (let x = 0; x < nJ; x++) {
    const ox = J[x] * nb;
    for (let y = x; y < nJ; y++) {
      const v = acc[x * nJ + y];
      om[ox + J[y]] -= v;
      if (y !== x) om[J[y] * nb + J[x]] -= v;
    }
  }
}

/** Upper triangle of W'V + V'W (W, V: rows x n) into acc (n x n). */
function symmetricProduct(w: Float64Array, v: Float64Array, rows: number, n: number, acc: Float64Array): void {
  acc.fill(0, 0, n * n);
  for (let r = 0; r < rows; r++) {
    const ro = r * n;
    for (let x = 0; x < n; x++) {
      const wx = w[ro + x];
      const vx = v[ro + x];
      const ao = x * n;
      for (let y = x; y < n; y++) acc[ao + y] += wx * v[ro + y] + vx * w[ro + y];
    }
  }
}

/** Add gamma Q_i' S Q_i of one trial to a term's Phi: site block, coupling and border. */
function scatterWithin(S: Float64Array, g: number, cols: PackedColumns, m: number, bs: number, nb: number, ss: Float64Array, sb: Float64Array, bb: Float64Array): void {
  const { row, value, index, n: nc } = cols;
  for (let u = 0; u < nc; u++) {
    const ru = row[u] * m;
    const gu = g * value[u];
    if (gu === 0) continue;
    const iu = index[u];
    if (u < bs) {
      for (let v = 0; v < bs; v++) ss[iu * bs + index[v]] += gu * value[v] * S[ru + row[v]];
      for (let v = bs; v < nc; v++) sb[iu * nb + index[v]] += gu * value[v] * S[ru + row[v]];
    } else for (let v = bs; v < nc; v++) bb[iu * nb + index[v]] += gu * value[v] * S[ru + row[v]];
  }
}

/** out = a b for a (rows x inner) and b (inner x cols), row-major. */
function multiply(a: Float64Array, rows: number, inner: number, b: Float64Array, cols: number, out: Float64Array): void {
  out.fill(0, 0, rows * cols);
  for (let r = 0; r < rows; r++) {
    const o = r * cols;
    for (let q = 0; q < inner; q++) {
      const x = a[r * inner + q];
      if (x === 0) continue;
      const bo = q * cols;
      for (let c = 0; c < cols; c++) out[o + c] += x * b[bo + c];
    }
  }
}

/** R = M_i C^-1 M_i' (m x m) for a trial of site `site` with columns `cols`, from the selected inverse. */
function trialInverse(L: CrossedLayout, inv: CrossedDerivatives['inverse'], site: number, cols: PackedColumns, R: Float64Array): void {
  const m = 1 + L.t;
  const bs = L.bs;
  const nb = L.border - 1;
  const { row, value, index, n: nc } = cols;
  const cs = inv.site[site];
  const cc = inv.coupling[site];
  const border = inv.border;
  R.fill(0);
  for (let a = 0; a < nc; a++) {
    const ia = index[a];
    const va = value[a];
    const ra = row[a] * m;
    if (a < bs) {
      for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cs[ia * bs + index[b]];
      for (let b = bs; b < nc; b++) R[ra + row[b]] += va * value[b] * cc[ia * nb + index[b]];
    } else {
      for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cc[index[b] * nb + ia];
      for (let b = bs; b < nc; b++) R[ra + row[b]] += va * value[b] * border[ia * nb + index[b]];
    }
  }
}

/** The within-term pair pieces of one layout: |G_ab|²_F and N_ab = G_Kb G_ba G_aK (a >= b). */
function layoutPairs(mo: LayoutMoments, m: number, within: readonly Within[]): LayoutPairs {
  const j = mo.j;
  const G = mo.gram;
  const colsOf = (w: Within): number[] =>
    w === 'trial' ? [0] : w === 'treatment-by-trial' ? Array.from({ length: m - 1 }, (_, k) => 1 + k) : Array.from({ length: mo.nBlocks }, (_, b) => m + b);
  const nW = within.length;
  const local = new Float64Array(nW * nW);
  const n: Float64Array[] = new Array(nW * nW);
  for (let a = 0; a < nW; a++)
    for (let b = 0; b <= a; b++) {
      const ca = colsOf(within[a]);
      const cb = colsOf(within[b]);
      let sq = 0;
      for (const u of ca) for (const v of cb) sq += G[u * j + v] ** 2;
      local[a * nW + b] = sq;
      // T = G_ba G_aK (|cb| x m), then N = G_Kb T
      const t = new Float64Array(cb.length * m);
      cb.forEach((v, x) => {
        for (const u of ca) {
          const g = G[v * j + u];
          if (g === 0) continue;
          for (let r = 0; r < m; r++) t[x * m + r] += g * G[u * j + r];
        }
      });
      const out = new Float64Array(m * m);
      for (let r = 0; r < m; r++) cb.forEach((v, x) => {
        const g = G[r * j + v];
        if (g === 0) return;
        for (let c = 0; c < m; c++) out[r * m + c] += g * t[x * m + c];
      });
      n[a * nW + b] = out;
    }
  return { mo, s: within.map((w) => mo.s[momentKey[w]]), local, n };
}
