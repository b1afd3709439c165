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
// - site and year terms: (q_k - tr C^kk) / gamma_k from the diagonal of the selected inverse, or,
//   for a ratio near zero, level by level (directTraces.ts);
// - AI (averageInformation.ts): the working variates Z_k Z_k' P y are, within a trial, J c for
//   J = [K | B], so their products through P need J'H0^-1 J per layout and one forward solve per term.
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { pack, type CrossedEvaluation, type LayoutFactor, type PackedColumns } from './crossedLikelihood.js';
import { layoutMoments, type LayoutMoments } from './layoutMoments.js';
import { selectedInverse, type SelectedInverse } from './arrowheadInverse.js';
import { DIRECT_BELOW, directTraces } from './directTraces.js';
import { averageInformation } from './averageInformation.js';

export { DIRECT_BELOW };
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
  /** The selected inverse of the coefficient matrix at this evaluation (the observed information reuses it). */
  readonly inverse: SelectedInverse;
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
  return { gradient, information, trace, quadratic, inverse: inv };
}
