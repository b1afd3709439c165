// Predictions from the crossed fit's factor. The shared effects are solved in their spherical
// scale u (effect = theta x u); the prediction-error covariance of (u, beta) is sigma² C^-1, C the
// mixed-model coefficient matrix whose factor is the arrowhead without its response row, so the
// error variance of w'(u, beta) is sigma² |L^-1 w|² — for w on one site and the fixed effects,
// a forward solve through that site's block and the border only.
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { trialPieces, type CrossedEvaluation, type TrialPieces } from './crossedLikelihood.js';
import { backSolveTranspose, forwardSolve } from './denseSmall.js';

export interface SharedSolution {
  /** Per site its block of u; the border's years and fixed effects. */
  readonly site: Float64Array[];
  readonly border: Float64Array;
}

export function solveShared(L: CrossedLayout, ev: CrossedEvaluation): SharedSolution {
  const B = L.border;
  const f = ev.factor.borderFactor;
  const x = new Float64Array(B - 1);
  for (let k = 0; k < B - 1; k++) x[k] = f[(B - 1) * B + k];
  backSolveTranspose(f, B, B - 1, x);
  const site = ev.factor.siteFactor.map((ls, s) => {
    const w = ev.factor.siteW[s];
    const u = new Float64Array(L.bs);
    for (let r = 0; r < L.bs; r++) {
      let v = w[r * B + B - 1];
      for (let k = 0; k < B - 1; k++) v -= w[r * B + k] * x[k];
      u[r] = v;
    }
    backSolveTranspose(ls, L.bs, L.bs, u);
    return u;
  });
  return { site, border: x };
}

/** Offset of the treatment-by-site effects inside a site's block. */
export function siteTreatmentOffset(L: CrossedLayout): number {
  return L.at.site >= 0 ? 1 : 0;
}

/** The contrast's value at site s: l'beta + l' (treatment-by-site effects of s). */
export function contrastAtSite(L: CrossedLayout, ev: CrossedEvaluation, sol: SharedSolution, s: number, l: Float64Array): number {
  let v = 0;
  for (let j = 0; j < L.p; j++) v += l[j] * ev.beta[j];
  const k = L.at['treatment-by-site'];
  if (k >= 0) for (let j = 0; j < L.t; j++) v += l[j] * ev.theta[k] * sol.site[s][siteTreatmentOffset(L) + j];
  return v;
}

/** Prediction-error variance of the contrast at site s (fixed part plus that site's treatment-by-site effects). */
export function contrastAtSiteErrorVariance(L: CrossedLayout, ev: CrossedEvaluation, s: number, l: Float64Array): number {
  const B = L.border;
  const k = L.at['treatment-by-site'];
  const zs = new Float64Array(L.bs);
  if (k >= 0) for (let j = 0; j < L.t; j++) zs[siteTreatmentOffset(L) + j] = l[j] * ev.theta[k];
  if (L.bs > 0) forwardSolve(ev.factor.siteFactor[s], L.bs, L.bs, zs);
  const w = ev.factor.siteW[s];
  const zb = new Float64Array(B - 1);
  for (let j = 0; j < L.p; j++) zb[L.q + j] = l[j];
  for (let r = 0; r < L.bs; r++) for (let c = 0; c < B - 1; c++) zb[c] -= w[r * B + c] * zs[r];
  forwardSolve(ev.factor.borderFactor, B, B - 1, zb);
  let s2 = 0;
  for (const v of zs) s2 += v * v;
  for (const v of zb) s2 += v * v;
  return ev.sigma2 * s2;
}

/**
 * Each trial's BLUP of each contrast: l'(beta + its site's, its year's and its own
 * treatment-by effects); the trial's own part from gamma_TxT T'H0^-1 (y - X beta - Z b).
 */
export function trialBlups(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, sol: SharedSolution, ls: readonly (Float64Array | null)[], pieces: readonly TrialPieces[] | null = trialPieces(d, L, ev.theta)): (number | null)[][] {
  const m = 1 + L.t;
  const gTT = L.at['treatment-by-trial'] >= 0 ? ev.theta[L.at['treatment-by-trial']] ** 2 : 0;
  return d.trials.map((tr, i) => {
    const cols = localColumns(L, tr.year, ev.theta);
    const coef = new Float64Array(m);
    for (const c of cols) coef[c.row] += c.value * (c.inSite ? sol.site[tr.site][c.index] : sol.border[c.index]);
    // K coefficients of beta alone, to take the shared part as coef - fixed part
    const own = new Float64Array(L.t);
    if (pieces && gTT > 0) {
      const { a, b } = pieces[i];
      for (let j = 0; j < L.t; j++) {
        let r = b[1 + j];
        for (let c = 0; c < m; c++) r -= a[(1 + j) * m + c] * coef[c];
        own[j] = gTT * r;
      }
    }
    return ls.map((l) => {
      if (!l) return null;
      // the treatment part of coef is beta + treatment-by-site + treatment-by-year for each treatment
      let v = 0;
      for (let j = 0; j < L.t; j++) v += l[j] * (coef[1 + j] + own[j]);
      return v;
    });
  });
}
