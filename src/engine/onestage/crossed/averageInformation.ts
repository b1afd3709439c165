// The average-information matrix of the crossed model's profiled REML criterion in the variance
// ratios (formula in crossedDerivatives.ts), from the working variates Z_k Z_k' P y.
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation, LayoutFactor, PackedColumns } from './crossedLikelihood.js';
import type { LayoutMoments } from './layoutMoments.js';
import { siteForward } from './arrowheadInverse.js';
import { forwardSolve } from './denseSmall.js';

/** AI_kl from the working variates w_k = Z_k Z_k' P y, each J c_k within a trial. */
export function averageInformation(
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
