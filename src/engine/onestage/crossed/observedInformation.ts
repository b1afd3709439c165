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
  readonly local: Float64Array;
  readonly n: Float64Array[];
}

export function observedInformation(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, der: CrossedDerivatives, ls: readonly Float64Array[]): ObservedInformation {
  const nT = L.terms.length;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const { at } = L;
  const inv = der.inverse;
  const Sinv = inv.border;
  const gamma = Float64Array.from(ev.theta, (t) => t * t);
  const within = WITHIN.filter((w) => at[w] >= 0);
  const nW = within.length;
  const wIndex = within.map((w) => at[w]);
  // shared terms: their offsets in a site's block or in a year's part of the border
  const siteOffsets = new Map<number, number[]>();
  if (at.site >= 0) siteOffsets.set(at.site, [0]);
  if (at['treatment-by-site'] >= 0) siteOffsets.set(at['treatment-by-site'], Array.from({ length: L.t }, (_, j) => (at.site >= 0 ? 1 : 0) + j));
  const yearOffsets = new Map<number, number[]>();
  if (at.year >= 0) yearOffsets.set(at.year, [0]);
  if (at['treatment-by-year'] >= 0) yearOffsets.set(at['treatment-by-year'], Array.from({ length: L.t }, (_, j) => (at.year >= 0 ? 1 : 0) + j));
  // terms with a part in the site blocks, in a fixed order: shared site terms, then within-trial terms
  const siteTerms = [...siteOffsets.keys(), ...wIndex];
  const nS = siteTerms.length;

  const columns: PackedColumns[] = [];
  for (let y = 0; y < L.nYears; y++) columns.push(pack(localColumns(L, y, ev.theta)));
  const trialsOfSite: number[][] = Array.from({ length: L.nSites }, () => []);
  d.trials.forEach((tr, i) => trialsOfSite[tr.site].push(i));
  const layouts = new Map<LayoutFactor, LayoutPairs>();
  const pairsOf = (i: number): LayoutPairs => {
    const lf = ev.pieces[i].layout;
    let lp = layouts.get(lf);
    if (!lp) {
      lp = layoutPairs(layoutMoments(d.trials[i], lf, m), m, within);
      layouts.set(lf, lp);
    }
    return lp;
  };

  // contrast directions x = C^-1 [0; l]: border part S^-1 e, site parts -L_s^-T W_s x_B
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
    for (const [k, offs] of yearOffsets) for (let y = 0; y < L.nYears; y++) for (const o of offs) contrastGradient[c][k] += x[y * L.by + o] ** 2;
  });

  const quad = new Float64Array(nT * nT);
  const local = new Float64Array(nT * nT);
  const mixed = new Float64Array(nT * nT);
  const omega = Array.from({ length: nT }, () => new Float64Array(nb * nb));
  // per-site scratch
  const phiSS = Array.from({ length: nW }, () => new Float64Array(bs * bs));
  const phiSB = Array.from({ length: nW }, () => new Float64Array(bs * nb));
  const psi = Array.from({ length: nS }, () => new Float64Array(bs * bs));
  const rr = Array.from({ length: nS }, () => new Float64Array(bs * nb));
  const tt = Array.from({ length: nS }, () => new Float64Array(bs * nb));
  const xs = ls.map(() => new Float64Array(bs));
  const R = new Float64Array(m * m);
  const mu = new Float64Array(m);
  const mark = new Uint8Array(nb);
  const J = new Int32Array(nb);
  const sJ = new Float64Array(nb * nb);
  const wJ = new Float64Array(bs * nb);
  const xSB = new Float64Array(bs * nb);
  const pw = new Float64Array(bs * nb);
  const vv = new Float64Array(bs * nb);
  const tmp = new Float64Array(bs * bs);

  for (let s = 0; s < L.nSites; s++) {
    const trials = trialsOfSite[s];
    const w = ev.factor.siteW[s];
    const lsF = ev.factor.siteFactor[s];
    // the border columns this site's trials touch (W_s and every Phi_sB vanish elsewhere)
    mark.fill(0);
    for (const i of trials) {
      const cols = columns[d.trials[i].year];
      for (let c = bs; c < cols.n; c++) mark[cols.index[c]] = 1;
    }
    let nJ = 0;
    for (let k = 0; k < nb; k++) if (mark[k]) J[nJ++] = k;
    for (let a = 0; a < nW; a++) {
      phiSS[a].fill(0);
      phiSB[a].fill(0);
    }
    // this site's contrast directions
    ls.forEach((_, c) => {
      const v = xs[c];
      const xb = xBorder[c];
      for (let r = 0; r < bs; r++) {
        let t = 0;
        for (let a = 0; a < nJ; a++) t -= w[r * B + J[a]] * xb[J[a]];
        v[r] = t;
      }
      backSolveTranspose(lsF, bs, bs, v);
      for (const [k, offs] of siteOffsets) for (const o of offs) contrastGradient[c][k] += v[o] ** 2;
    });
    for (const i of trials) {
      const tr = d.trials[i];
      const lp = pairsOf(i);
      const cols = columns[tr.year];
      trialInverse(L, inv, tr.site, cols, R);
      for (let a = 0; a < nW; a++)
        for (let b = 0; b <= a; b++) {
          const nab = lp.n[a * nW + b];
          let v = 0;
          for (let x = 0; x < m * m; x++) v += R[x] * nab[x];
          mixed[wIndex[a] * nT + wIndex[b]] += v;
          local[wIndex[a] * nT + wIndex[b]] += lp.local[a * nW + b];
        }
      // Phi of the within-trial terms, scattered through the trial's columns
      const { row, value, index, n: nc } = cols;
      for (let a = 0; a < nW; a++) {
        const S = lp.mo.s[momentKey[within[a]]];
        const g = gamma[wIndex[a]];
        const ss = phiSS[a];
        const sb = phiSB[a];
        const bb = omega[wIndex[a]];
        for (let u = 0; u < nc; u++) {
          const ru = row[u] * m;
          const gu = g * value[u];
          for (let v = 0; v < nc; v++) {
            const val = gu * value[v] * S[ru + row[v]];
            if (u < bs) {
              if (v < bs) ss[index[u] * bs + index[v]] += val;
              else sb[index[u] * nb + index[v]] += val;
            } else if (v >= bs) bb[index[u] * nb + index[v]] += val;
          }
        }
      }
      // contrast gradients of the within-trial terms: (M_i x)' S (M_i x)
      ls.forEach((_, c) => {
        mu.fill(0);
        const xb = xBorder[c];
        const xv = xs[c];
        for (let u = 0; u < nc; u++) mu[row[u]] += value[u] * (u < bs ? xv[index[u]] : xb[index[u]]);
        for (let a = 0; a < nW; a++) {
          const S = lp.mo.s[momentKey[within[a]]];
          let v = 0;
          for (let r = 0; r < m; r++) for (let q = 0; q < m; q++) v += mu[r] * S[r * m + q] * mu[q];
          contrastGradient[c][wIndex[a]] += gamma[wIndex[a]] * v;
        }
      });
    }
    if (bs === 0) continue;
    for (let a = 0; a < nJ; a++) for (let b = 0; b < nJ; b++) sJ[a * nJ + b] = Sinv[J[a] * nb + J[b]];
    for (let r = 0; r < bs; r++) for (let a = 0; a < nJ; a++) wJ[r * nJ + a] = w[r * B + J[a]];
    siteTerms.forEach((k, a) => {
      const p = psi[a];
      const offs = siteOffsets.get(k);
      // Psi_ss = L_s^-1 Phi_ss L_s^-T
      tmp.fill(0);
      if (offs) for (const o of offs) tmp[o * bs + o] = 1;
      else tmp.set(phiSS[a - siteOffsets.size]);
      forwardSolveColumns(lsF, bs, tmp, bs);
      for (let r = 0; r < bs; r++) for (let c = 0; c < bs; c++) p[c * bs + r] = tmp[r * bs + c];
      forwardSolveColumns(lsF, bs, p, bs);
      // X_sB = L_s^-1 Phi_sB on the touched columns
      xSB.fill(0, 0, bs * nJ);
      if (!offs) {
        const sb = phiSB[a - siteOffsets.size];
        for (let r = 0; r < bs; r++) for (let c = 0; c < nJ; c++) xSB[r * nJ + c] = sb[r * nb + J[c]];
        forwardSolveColumns(lsF, bs, xSB, nJ);
      }
      // R = X_sB - Psi W, V = X_sB - Psi W / 2 (so W'R + R'W + W'Psi W = W'V + V'W), T = R S^-1
      const rk = rr[a];
      for (let r = 0; r < bs; r++)
        for (let c = 0; c < nJ; c++) {
          let v = 0;
          for (let q = 0; q < bs; q++) v += p[r * bs + q] * wJ[q * nJ + c];
          pw[r * nJ + c] = v;
          rk[r * nJ + c] = xSB[r * nJ + c] - v;
          vv[r * nJ + c] = xSB[r * nJ + c] - v / 2;
        }
      const om = omega[k];
      for (let x = 0; x < nJ; x++)
        for (let y = 0; y < nJ; y++) {
          let v = 0;
          for (let r = 0; r < bs; r++) v += wJ[r * nJ + x] * vv[r * nJ + y] + vv[r * nJ + x] * wJ[r * nJ + y];
          om[J[x] * nb + J[y]] -= v;
        }
      const tk = tt[a];
      for (let r = 0; r < bs; r++)
        for (let c = 0; c < nJ; c++) {
          let v = 0;
          for (let q = 0; q < nJ; q++) v += rk[r * nJ + q] * sJ[q * nJ + c];
          tk[r * nJ + c] = v;
        }
    });
    for (let a = 0; a < nS; a++)
      for (let b = 0; b <= a; b++) {
        let v = 0;
        const pa = psi[a];
        const pb = psi[b];
        for (let x = 0; x < bs * bs; x++) v += pa[x] * pb[x];
        const ta = tt[a];
        const rb = rr[b];
        for (let x = 0; x < bs * nJ; x++) v += 2 * ta[x] * rb[x];
        const ka = siteTerms[a];
        const kb = siteTerms[b];
        quad[Math.max(ka, kb) * nT + Math.min(ka, kb)] += v;
      }
  }

  // the border: Omega_a += Phi_BB (selectors for the year terms), Y_a = S^-1 Omega_a
  for (const [k, offs] of yearOffsets) for (let y = 0; y < L.nYears; y++) for (const o of offs) omega[k][(y * L.by + o) * nb + y * L.by + o] += 1;
  const Y = omega.map((om) => {
    const out = new Float64Array(nb * nb);
    for (let i = 0; i < nb; i++)
      for (let k = 0; k < nb; k++) {
        const s = Sinv[i * nb + k];
        if (s === 0) continue;
        const rowK = k * nb;
        for (let j = 0; j < nb; j++) out[i * nb + j] += s * om[rowK + j];
      }
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
  for (const [k, offs] of siteOffsets) {
    extra[k] = L.nSites * offs.length;
    for (let s = 0; s < L.nSites; s++) for (const o of offs) extra[k] -= 2 * inv.site[s][o * bs + o];
  }
  for (const [k, offs] of yearOffsets) {
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
      const q = ev.sigma2 * der.information[k * nT + l] + (der.quadratic[k] * der.quadratic[l]) / ev.rHr;
      let h = gamma[k] * gamma[l] * ((2 * q) / ev.sigma2) - e;
      if (k === l) h += gamma[k] * der.gradient[k];
      hessian[k * nT + l] = h;
      hessian[l * nT + k] = h;
    }
  return { hessian, contrastGradient };
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
  return { mo, local, n };
}
