// Inference from the per-trial-residual crossed fit. Satterthwaite df as in lmerTest,
// df = 2 (l'Phi l)² / g'Ag with g the gradient of l'Phi l (Phi = (X'V^-1X)^-1) in the variances and
// A = 2 H^-1 their asymptotic covariance, H the observed Hessian of -2 REML log-likelihood — on
// networks up to EXACT_HESSIAN_MAX_TRIALS trials, through Hessian products (perTrialResidualHessian.ts;
// one gradient pass each, a few per contrast).
// Above that, with one residual per trial the Hessian (one row per trial) is too costly, and the
// average information stands in for it (A = 2 AI^-1; on the 22-trial check network the df came
// out 16.09 against the Hessian's 14.92). The variances' SEs are from AI^-1 in both cases, as in
// the per-trial engine. The gradient is exact: d(l'Phi l)/d theta = -u'(dV/d theta) u, u = V^-1 X Phi l
// = V0^-1 A C^-1 (0, l) (A = [Z Lambda | X]), so g_k = -|Z_k'u|² for a term, -|u_i|² for trial i's
// residual. Likelihood-ratio test of a term by a refit without it.
import { chisqUpper } from '../../stats/distributions.js';
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import { solveCoefficients, type PerTrialDerivatives } from './perTrialResidualDerivatives.js';
import { informationSolver } from './perTrialResidualSolve.js';
import { perTrialSearch } from './perTrialResidualSearch.js';
import { hessianProduct, hessianSolve } from './perTrialResidualHessian.js';
import { backSolveTranspose } from './denseSmall.js';

/** Networks up to this many trials get Satterthwaite df from the observed Hessian; larger ones from the average information. */
export const EXACT_HESSIAN_MAX_TRIALS = 200;

/** Networks up to this many trials get the residuals' SEs from exact solves; larger ones from the preconditioner. */
export const EXACT_RESIDUAL_SE_MAX_TRIALS = 150;

export interface PerTrialInference {
  readonly df: (number | null)[];
  /** SE of each term's variance, sqrt(2 [AI^-1]_kk); null for a term held at zero. */
  readonly termSe: (number | null)[];
  /** SE of each trial's residual variance. */
  readonly residualSe: (number | null)[];
  readonly residualSeExact: boolean;
  /** Whether the df came from the observed Hessian, and for how many contrasts that failed (AI used). */
  readonly hessian: boolean;
  readonly hessianFallbacks: number;
}

/** Sum over each term's levels of (Z_k'u)², and |u_i|² per trial, for u given trial by trial. */
export function termQuadratics(d: CrossedData, L: CrossedLayout, u: readonly Float64Array[]): Float64Array {
  const nT = L.terms.length;
  const m = 1 + L.t;
  const out = new Float64Array(nT + d.trials.length);
  const site = new Float64Array(L.nSites * m);
  const year = new Float64Array(L.nYears * m);
  const { at } = L;
  d.trials.forEach((tr, i) => {
    const k = new Float64Array(m);
    const b = new Float64Array(tr.nBlocks);
    let sq = 0;
    u[i].forEach((x, p) => {
      k[0] += x;
      k[1 + tr.treatment[p]] += x;
      if (tr.block[p] >= 0) b[tr.block[p]] += x;
      sq += x * x;
    });
    out[nT + i] = sq;
    for (let r = 0; r < m; r++) {
      site[tr.site * m + r] += k[r];
      year[tr.year * m + r] += k[r];
    }
    if (at.trial >= 0) out[at.trial] += k[0] ** 2;
    if (at['treatment-by-trial'] >= 0) for (let r = 1; r < m; r++) out[at['treatment-by-trial']] += k[r] ** 2;
    if (at.block >= 0) for (const x of b) out[at.block] += x * x;
  });
  for (let s = 0; s < L.nSites; s++) {
    if (at.site >= 0) out[at.site] += site[s * m] ** 2;
    if (at['treatment-by-site'] >= 0) for (let r = 1; r < m; r++) out[at['treatment-by-site']] += site[s * m + r] ** 2;
  }
  for (let y = 0; y < L.nYears; y++) {
    if (at.year >= 0) out[at.year] += year[y * m] ** 2;
    if (at['treatment-by-year'] >= 0) for (let r = 1; r < m; r++) out[at['treatment-by-year']] += year[y * m + r] ** 2;
  }
  return out;
}

/** u = V^-1 X (X'V^-1X)^-1 l, trial by trial. */
export function gls(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, l: Float64Array): Float64Array[] {
  const m = 1 + L.t;
  const nSiteRows = L.nSites * L.bs;
  const z = new Float64Array(nSiteRows + L.border - 1);
  for (let j = 0; j < L.p; j++) z[nSiteRows + L.q + j] = l[j];
  solveCoefficients(L, ev, z);
  const cols = Array.from({ length: L.nYears }, (_, y) => localColumns(L, y, ev.theta));
  return d.trials.map((tr, i) => {
    const mu = new Float64Array(m);
    for (const c of cols[tr.year]) mu[c.row] += c.value * (c.inSite ? z[tr.site * L.bs + c.index] : z[nSiteRows + c.index]);
    const lf = ev.pieces[i].layout;
    const n = tr.y.length;
    const w = new Float64Array(n);
    for (let p = 0; p < n; p++) for (let r = 0; r < m; r++) w[p] += lf.lk[p * m + r] * mu[r];
    backSolveTranspose(lf.l, n, n, w);
    return w;
  });
}

/**
 * The Satterthwaite df by the observed Hessian (as lmerTest) when `exactHessian`, else by the
 * average information (and by it too for a contrast whose Hessian solve fails: counted in
 * `hessianFallbacks`).
 */
export function perTrialInference(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, der: PerTrialDerivatives, freeTerm: readonly boolean[], ls: readonly Float64Array[], v: Float64Array, r: Float64Array, exactHessian: boolean): PerTrialInference {
  const nT = L.terms.length;
  const nTr = d.trials.length;
  const solver = informationSolver(der, nT, freeTerm);
  const product = exactHessian ? hessianProduct(d, L, v, r, freeTerm) : null;
  let hessianFallbacks = 0;
  const df = ls.map((l) => {
    let phi = 0;
    for (let i = 0; i < L.p; i++) for (let j = 0; j < L.p; j++) phi += l[i] * ev.xhxInverse[i * L.p + j] * l[j];
    const g = termQuadratics(d, L, gls(d, L, ev, l)).map((x) => -x);
    for (let k = 0; k < nT; k++) if (!freeTerm[k]) g[k] = 0;
    let s: { x: Float64Array; converged: boolean } | null = product ? hessianSolve(product, solver, g) : null;
    if (product && !s?.converged) hessianFallbacks++;
    if (!s?.converged) s = solver.solve(g);
    let gag = 0;
    for (let i = 0; i < g.length; i++) gag += g[i] * s.x[i];
    return gag > 0 && s.converged ? (phi * phi) / gag : null;
  });
  const unit = (k: number) => {
    const e = new Float64Array(nT + nTr);
    e[k] = 1;
    return e;
  };
  const termSe = L.terms.map((_, k) => {
    if (!freeTerm[k]) return null;
    const s = solver.solve(unit(k));
    return s.converged && s.x[k] > 0 ? Math.sqrt(2 * s.x[k]) : null;
  });
  const exact = nTr <= EXACT_RESIDUAL_SE_MAX_TRIALS;
  const residualSe = d.trials.map((_, i) => {
    const k = nT + i;
    const x = exact ? solver.solve(unit(k)).x[k] : solver.approximate(unit(k))[k];
    return x > 0 ? Math.sqrt(2 * x) : null;
  });
  return { df, termSe, residualSe, residualSeExact: exact, hessian: exactHessian, hessianFallbacks };
}

export interface PerTrialTermTest {
  readonly statistic: number;
  readonly p: number;
  /** The refit's criterion (same data scale as the fit's). */
  readonly reducedCriterion: number;
}

/** Refit without term k; the statistic's null law is the 50:50 mixture of chi2_0 and chi2_1. */
export function perTrialLikelihoodRatio(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, v: Float64Array, r: Float64Array, k: number, signal?: AbortSignal): PerTrialTermTest {
  if (!(v[k] > 0)) return { statistic: 0, p: 1, reducedCriterion: ev.criterion };
  const start = Float64Array.from(v);
  start[k] = 0;
  const reduced = perTrialSearch(d, L, start, r, [k], { signal }).evaluation;
  const statistic = Math.max(0, reduced.criterion - ev.criterion);
  return { statistic, p: statistic > 0 ? 0.5 * chisqUpper(statistic, 1) : 1, reducedCriterion: reduced.criterion };
}
