// First derivatives and the average information of the crossed model's profiled REML criterion
// f = (N - p) log(r'H^-1 r) + log|H| + log|X'H^-1 X| + const, in the variance ratios
// gamma_k = theta_k² (each term's variance over the residual variance), H = H0 + sum_k gamma_k Z_k Z_k':
//   df/dgamma_k = tr(P Z_k Z_k') - |Z_k' P y|² / sigma²,
//   AI_kl = y'P Z_k Z_k' P Z_l Z_l' P y / sigma² - |Z_k'Py|² |Z_l'Py|² / (sigma² r'H^-1 r)
// (the average of observed and expected information, Gilmour, Thompson & Cullis 1995, with the
// residual variance profiled out: the Schur complement of the full AI matrix on it), with
// P = H^-1 - H^-1 X (X'H^-1 X)^-1 X'H^-1 = H0^-1 - H0^-1 A C^-1 A' H0^-1, A = [Z Lambda | X] and
// C the coefficient matrix the arrowhead factors. Everything is gathered trial by trial:
// - within-trial terms: tr(P_ii Z Z') = tr(H0^-1 Z Z') - tr(R_i S), R_i the trial's block of
//   M_i C^-1 M_i' (its site's block and the border of the selected inverse);
// - site and year terms: z'Pz per level = z'H0^-1 z - |L^-1 A'H0^-1 z|² by a forward solve
//   through the arrowhead (a year's level runs through every site of that year);
// - AI: the working variates Z_k Z_k' P y are, within a trial, J c for J = [K | B], so their
//   products through P need J'H0^-1 J per layout and one forward solve per term.
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { pack, type CrossedEvaluation, type LayoutFactor, type PackedColumns } from './crossedLikelihood.js';
import { layoutMoments, type LayoutMoments } from './layoutMoments.js';
import { selectedInverse, siteForward } from './arrowheadInverse.js';
import { solveShared } from './crossedPredictions.js';
import { forwardSolve } from './denseSmall.js';

export interface CrossedDerivatives {
  /** d f / d gamma_k, f the profiled criterion (-2 REML log-likelihood). */
  readonly gradient: Float64Array;
  /** Average information of f in gamma (terms x terms, row-major). */
  readonly information: Float64Array;
  /** tr(P Z_k Z_k') and |Z_k' P y|², residual units. */
  readonly trace: Float64Array;
  readonly quadratic: Float64Array;
}

export function crossedDerivatives(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, withInformation = true): CrossedDerivatives {
  const nT = L.terms.length;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const { at } = L;
  const f = ev.factor;
  const sol = solveShared(L, ev);
  const inv = selectedInverse(L, f);
  const trace = new Float64Array(nT);
  const quadratic = new Float64Array(nT);
  const moments = new Map<LayoutFactor, LayoutMoments>();
  const columns: PackedColumns[] = [];
  for (let y = 0; y < L.nYears; y++) columns.push(pack(localColumns(L, y, ev.theta)));
  const kappa: Float64Array[] = [];
  const zeta: Float64Array[] = [];
  const siteScore = new Float64Array(L.nSites * m);
  const yearScore = new Float64Array(L.nYears * m);
  const R = new Float64Array(m * m);
  const trialsOfSite: number[][] = Array.from({ length: L.nSites }, () => []);

  // scratch for one trial (sized for the largest)
  let maxN = 0;
  for (const tr of d.trials) maxN = Math.max(maxN, tr.y.length);
  const mu = new Float64Array(m);
  const e = new Float64Array(maxN);
  const border = inv.border;
  for (let i = 0; i < d.trials.length; i++) {
    const tr = d.trials[i];
    trialsOfSite[tr.site].push(i);
    const piece = ev.pieces[i];
    const lf = piece.layout;
    let mo = moments.get(lf);
    if (!mo) {
      mo = layoutMoments(tr, lf, m);
      moments.set(lf, mo);
    }
    const n = tr.y.length;
    const cols = columns[tr.year];
    const { row, value, index } = cols;
    const nc = cols.n;
    const lk = lf.lk;
    // mu = M_i x-hat, the fitted shared and fixed effects in the trial's basis K (site columns first)
    mu.fill(0);
    const us = sol.site[tr.site];
    for (let c = 0; c < nc; c++) mu[row[c]] += value[c] * (c < bs ? us[index[c]] : sol.border[index[c]]);
    // L^-1 (y - K mu): its products with L^-1 K and L^-1 B are K'Py and B'Py for this trial
    e.set(tr.y);
    forwardSolve(lf.l, n, n, e);
    for (let p = 0; p < n; p++) {
      let s = 0;
      for (let r = 0; r < m; r++) s += lk[p * m + r] * mu[r];
      e[p] -= s;
    }
    const k = new Float64Array(m);
    const nB = mo.nBlocks;
    const z = new Float64Array(nB);
    const lb = mo.lb;
    for (let p = 0; p < n; p++) {
      const v = e[p];
      for (let r = 0; r < m; r++) k[r] += lk[p * m + r] * v;
      for (let b = 0; b < nB; b++) z[b] += lb[p * nB + b] * v;
    }
    kappa.push(k);
    zeta.push(z);
    for (let r = 0; r < m; r++) {
      siteScore[tr.site * m + r] += k[r];
      yearScore[tr.year * m + r] += k[r];
    }
    // within-trial terms: R = M_i C^-1 M_i' from the selected inverse
    R.fill(0);
    const cs = inv.site[tr.site];
    const cc = inv.coupling[tr.site];
    // the first bs local columns are the site's own effects (localColumns puts them first)
    for (let a = 0; a < nc; a++) {
      const ia = index[a];
      const va = value[a];
      const ra = row[a] * m;
      if (a < bs) {
        const rs = ia * bs;
        const rc = ia * nb;
        for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cs[rs + index[b]];
        for (let b = bs; b < nc; b++) R[ra + row[b]] += va * value[b] * cc[rc + index[b]];
      } else {
        for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cc[index[b] * nb + ia];
        const rowA = ia * nb;
        for (let b = bs; b < nc; b++) R[ra + row[b]] += va * value[b] * border[rowA + index[b]];
      }
    }
    const trRS = (s: Float64Array) => {
      let v = 0;
      for (let x = 0; x < m * m; x++) v += R[x] * s[x];
      return v;
    };
    if (at.trial >= 0) {
      trace[at.trial] += mo.trace.trial - trRS(mo.s.trial);
      quadratic[at.trial] += k[0] * k[0];
    }
    if (at['treatment-by-trial'] >= 0) {
      trace[at['treatment-by-trial']] += mo.trace.treatment - trRS(mo.s.treatment);
      for (let r = 1; r < m; r++) quadratic[at['treatment-by-trial']] += k[r] * k[r];
    }
    if (at.block >= 0) {
      trace[at.block] += mo.trace.block - trRS(mo.s.block);
      for (let b = 0; b < nB; b++) quadratic[at.block] += z[b] * z[b];
    }
  }

  // rows of K that a shared term's levels stand on: the intercept (site, year) or each treatment
  const rowsOf = (term: 'site' | 'treatment-by-site' | 'year' | 'treatment-by-year'): number[] =>
    at[term] < 0 ? [] : term === 'site' || term === 'year' ? [0] : Array.from({ length: L.t }, (_, j) => 1 + j);
  const siteLevels = [...rowsOf('site').map((r) => [at.site, r]), ...rowsOf('treatment-by-site').map((r) => [at['treatment-by-site'], r])];
  const yearLevels = [...rowsOf('year').map((r) => [at.year, r]), ...rowsOf('treatment-by-year').map((r) => [at['treatment-by-year'], r])];
  for (let s = 0; s < L.nSites; s++) for (const [term, r] of siteLevels) quadratic[term] += siteScore[s * m + r] ** 2;
  for (let y = 0; y < L.nYears; y++) for (const [term, r] of yearLevels) quadratic[term] += yearScore[y * m + r] ** 2;

  // shared terms' traces. Away from zero, tr(P Z_k Z_k') = (q_k - tr C^kk) / gamma_k with C^kk the
  // term's diagonal block of C^-1 (from log|H| + log|X'H^-1X| = log|H0| + log|D| + log|C|, D the
  // prior scale of the spherical effects): the diagonal of the selected inverse, almost free.
  // Near zero that difference cancels, so such a term takes the direct route below.
  const direct = (term: number): boolean => ev.theta[term] ** 2 < DIRECT_BELOW;
  const viaInverse = (levels: number[][], diagonal: (level: number[]) => number, count: number) => {
    for (const lv of levels) if (!direct(lv[0])) trace[lv[0]] += (count - diagonal(lv)) / ev.theta[lv[0]] ** 2;
  };
  // a site's own block: intercept first, then its treatment effects
  viaInverse(siteLevels, ([, r]) => {
    const offset = at.site >= 0 ? r : r - 1;
    let v = 0;
    for (let s = 0; s < L.nSites; s++) v += inv.site[s][offset * bs + offset];
    return v;
  }, L.nSites);
  viaInverse(yearLevels, ([, r]) => {
    const offset = at.year >= 0 ? r : r - 1;
    let v = 0;
    for (let y = 0; y < L.nYears; y++) v += inv.border[(y * L.by + offset) * nb + y * L.by + offset];
    return v;
  }, L.nYears);
  const directSite = siteLevels.filter(([term]) => direct(term));
  const directYear = yearLevels.filter(([term]) => direct(term));
  directTraces(d, L, ev, columns, trialsOfSite, directSite, directYear, trace);

  const gradient = new Float64Array(nT);
  for (let k = 0; k < nT; k++) gradient[k] = trace[k] - quadratic[k] / ev.sigma2;
  const information = withInformation ? averageInformation(d, L, ev, columns, moments, kappa, zeta, siteScore, yearScore, quadratic) : new Float64Array(nT * nT);
  return { gradient, information, trace, quadratic };
}

/** Variance ratios below this take the direct route to their trace (no cancellation). */
export const DIRECT_BELOW = 1e-2;

/**
 * Traces of shared terms level by level: z'H0^-1 z - |L^-1 g|², g = A'H0^-1 z = the sum over the
 * level's trials of M_i' a_i[:, r] (a year's level runs through every site of that year).
 */
function directTraces(
  d: CrossedData,
  L: CrossedLayout,
  ev: CrossedEvaluation,
  columns: readonly PackedColumns[],
  trialsOfSite: readonly number[][],
  siteLevels: readonly number[][],
  yearLevels: readonly number[][],
  trace: Float64Array,
): void {
  if (siteLevels.length === 0 && yearLevels.length === 0) return;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const f = ev.factor;
  const nY = yearLevels.length;
  const yearBorder = Array.from({ length: L.nYears * nY }, () => new Float64Array(nb));
  const yearSq = new Float64Array(L.nYears * nY);
  const yearZhz = new Float64Array(L.nYears * nY);
  const gs = new Float64Array(bs);
  const gb = new Float64Array(nb);
  for (let s = 0; s < L.nSites; s++) {
    const mine = trialsOfSite[s];
    for (const [term, r] of siteLevels) {
      gs.fill(0);
      gb.fill(0);
      let zhz = 0;
      for (const i of mine) {
        const a = ev.pieces[i].a;
        const cols = columns[d.trials[i].year];
        zhz += a[r * m + r];
        for (let c = 0; c < cols.n; c++) {
          const v = cols.value[c] * a[cols.row[c] * m + r];
          if (cols.inSite[c]) gs[cols.index[c]] += v;
          else gb[cols.index[c]] += v;
        }
      }
      let sq = bs > 0 ? siteForward(L, f, s, gs, gb) : 0;
      forwardSolve(f.borderFactor, B, nb, gb);
      for (let x = 0; x < nb; x++) sq += gb[x] * gb[x];
      trace[term] += zhz - sq;
    }
    for (let yl = 0; yl < nY; yl++) {
      const r = yearLevels[yl][1];
      // trials of this site grouped by year: one site part per (year, level)
      const byYear = new Map<number, Float64Array>();
      for (const i of mine) {
        const tr = d.trials[i];
        const a = ev.pieces[i].a;
        const cols = columns[tr.year];
        const slot = tr.year * nY + yl;
        yearZhz[slot] += a[r * m + r];
        let g = byYear.get(tr.year);
        if (!g) byYear.set(tr.year, (g = new Float64Array(bs)));
        const border = yearBorder[slot];
        for (let c = 0; c < cols.n; c++) {
          const v = cols.value[c] * a[cols.row[c] * m + r];
          if (cols.inSite[c]) g[cols.index[c]] += v;
          else border[cols.index[c]] += v;
        }
      }
      if (bs > 0) for (const [y, g] of byYear) yearSq[y * nY + yl] += siteForward(L, f, s, g, yearBorder[y * nY + yl]);
    }
  }
  for (let y = 0; y < L.nYears; y++)
    for (let yl = 0; yl < nY; yl++) {
      const slot = y * nY + yl;
      const border = yearBorder[slot];
      forwardSolve(f.borderFactor, B, nb, border);
      let sq = yearSq[slot];
      for (let x = 0; x < nb; x++) sq += border[x] * border[x];
      trace[yearLevels[yl][0]] += yearZhz[slot] - sq;
    }
}

/** AI_kl from the working variates w_k = Z_k Z_k' P y, each J c_k within a trial. */
function averageInformation(
  d: CrossedData,
  L: CrossedLayout,
  ev: CrossedEvaluation,
  columns: readonly PackedColumns[],
  moments: Map<LayoutFactor, LayoutMoments>,
  kappa: readonly Float64Array[],
  zeta: readonly Float64Array[],
  siteScore: Float64Array,
  yearScore: Float64Array,
  quadratic: Float64Array,
): Float64Array {
  const nT = L.terms.length;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const { at } = L;
  const nSiteRows = L.nSites * bs;
  // A'H0^-1 w_k for each term, sites' parts then the border
  const rhs = Array.from({ length: nT }, () => new Float64Array(nSiteRows + nb));
  const gram = new Float64Array(nT * nT);
  const c = Array.from({ length: nT }, () => new Float64Array(m + 8));
  const gc = Array.from({ length: nT }, () => new Float64Array(m + 8));
  d.trials.forEach((tr, i) => {
    const mo = moments.get(ev.pieces[i].layout)!;
    const j = mo.j;
    for (let k = 0; k < nT; k++) {
      if (c[k].length < j) {
        c[k] = new Float64Array(j);
        gc[k] = new Float64Array(j);
      }
      c[k].fill(0);
    }
    if (at.site >= 0) c[at.site][0] = siteScore[tr.site * m];
    if (at.year >= 0) c[at.year][0] = yearScore[tr.year * m];
    if (at.trial >= 0) c[at.trial][0] = kappa[i][0];
    for (let r = 1; r < m; r++) {
      if (at['treatment-by-site'] >= 0) c[at['treatment-by-site']][r] = siteScore[tr.site * m + r];
      if (at['treatment-by-year'] >= 0) c[at['treatment-by-year']][r] = yearScore[tr.year * m + r];
      if (at['treatment-by-trial'] >= 0) c[at['treatment-by-trial']][r] = kappa[i][r];
    }
    if (at.block >= 0) for (let b = 0; b < mo.nBlocks; b++) c[at.block][m + b] = zeta[i][b];
    const cols = columns[tr.year];
    for (let k = 0; k < nT; k++) {
      const ck = c[k];
      const g = gc[k];
      for (let r = 0; r < j; r++) {
        let v = 0;
        for (let q = 0; q < j; q++) v += mo.gram[r * j + q] * ck[q];
        g[r] = v;
      }
      for (let l = 0; l <= k; l++) {
        let v = 0;
        for (let r = 0; r < j; r++) v += c[l][r] * g[r];
        gram[k * nT + l] += v;
      }
      const out = rhs[k];
      for (let x = 0; x < cols.n; x++) {
        const v = cols.value[x] * g[cols.row[x]];
        if (cols.inSite[x]) out[tr.site * bs + cols.index[x]] += v;
        else out[nSiteRows + cols.index[x]] += v;
      }
    }
  });
  // x_k = L^-1 rhs_k through the arrowhead, in place
  for (const v of rhs) {
    const border = v.subarray(nSiteRows);
    if (bs > 0) for (let s = 0; s < L.nSites; s++) siteForward(L, ev.factor, s, v.subarray(s * bs, (s + 1) * bs), border);
    forwardSolve(ev.factor.borderFactor, B, nb, border);
  }
  const info = new Float64Array(nT * nT);
  for (let k = 0; k < nT; k++)
    for (let l = 0; l <= k; l++) {
      let xx = 0;
      const a = rhs[k];
      const b = rhs[l];
      for (let x = 0; x < a.length; x++) xx += a[x] * b[x];
      const v = (gram[k * nT + l] - xx) / ev.sigma2 - (quadratic[k] * quadratic[l]) / (ev.sigma2 * ev.rHr);
      info[k * nT + l] = v;
      info[l * nT + k] = v;
    }
  return info;
}
