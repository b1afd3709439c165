// Inference from the crossed fit. Satterthwaite df as lmerTest computes them: the contrast's
// variance as a function of the variance parameters, its gradient g and the parameters'
// asymptotic covariance A = 2 H^-1 (H the Hessian of -2 REML log-likelihood), df = 2 v² / g'Ag;
// here on log variances (the df do not depend on the parameterisation at an interior optimum),
// H by forward differences of the analytic gradient, the contrast variances' gradient by forward
// differences at the same points. Likelihood-ratio test of each term by a refit without it; profile
// intervals for a variance by a bracketed search of the profiled criterion.
import { chisqQuantile, chisqUpper } from '../../stats/distributions.js';
import { nelderMead } from '../../rate/mixed/nelderMead.js';
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, unprofiledCriterion, type CrossedEvaluation } from './crossedLikelihood.js';
import { optimiseCrossed, solveSymmetric, type OptimiseHooks } from './optimiseCrossed.js';
import { crossedDerivatives } from './crossedDerivatives.js';

/** Terms whose relative sd is this small count as at zero (left out of the df calculation). */
export const AT_ZERO = 1e-5;

/** Variance of each contrast, sigma² l'(X'H^-1X)^-1 l, at evaluation ev. */
function contrastVariances(ev: CrossedEvaluation, sigma2: number, p: number, ls: readonly Float64Array[]): number[] {
  return ls.map((l) => {
    let s = 0;
    for (let i = 0; i < p; i++) {
      if (l[i] === 0) continue;
      for (let j = 0; j < p; j++) s += l[i] * ev.xhxInverse[i * p + j] * l[j];
    }
    return sigma2 * s;
  });
}

export interface SatterthwaiteResult {
  readonly df: (number | null)[];
  /** Standard error of each term's variance (delta method from A on the log scale); null at zero or when A fails. */
  readonly varianceSe: (number | null)[];
  readonly residualSe: number | null;
}

export function satterthwaite(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, ls: readonly Float64Array[]): SatterthwaiteResult {
  const none: SatterthwaiteResult = { df: ls.map(() => null), varianceSe: L.terms.map(() => null), residualSe: null };
  const free = L.terms.map((_, k) => k).filter((k) => ev.theta[k] > AT_ZERO);
  const m = 1 + free.length;
  const psi0 = new Float64Array(m);
  psi0[0] = Math.log(ev.sigma2);
  free.forEach((k, i) => (psi0[1 + i] = Math.log(ev.sigma2 * ev.theta[k] ** 2)));
  // the gradient of the unprofiled criterion F(log sigma², log sigma_k²) from the analytic
  // derivatives (crossedDerivatives.ts); its central differences give the Hessian
  const N = d.nObservations;
  const at = (psi: Float64Array): { g: Float64Array; v: number[] } | null => {
    const s2 = Math.exp(psi[0]);
    const th = new Float64Array(L.terms.length);
    free.forEach((k, i) => (th[k] = Math.sqrt(Math.exp(psi[1 + i]) / s2)));
    const e = evaluateCrossed(d, L, th);
    if (!e) return null;
    const der = crossedDerivatives(d, L, e, false);
    const g = new Float64Array(m);
    // dF/dlog sigma_k² = gamma_k dF/dgamma_k; dF/dlog sigma² = (N - p) - r'H^-1r / sigma² - sum_k gamma_k dF/dgamma_k
    g[0] = N - L.p - e.rHr / s2;
    free.forEach((k, i) => {
      const v = th[k] ** 2 * (der.trace[k] - der.quadratic[k] / s2);
      g[1 + i] = v;
      g[0] -= v;
    });
    return { g, v: contrastVariances(e, s2, L.p, ls) };
  };
  // forward differences from the optimum (step 1e-5 on the log scale: truncation near 1e-5
  // relative, rounding of the analytic gradient far below), one derivative pass per parameter
  const h = 1e-5;
  const centre = at(psi0);
  if (!centre) return none;
  const H = new Float64Array(m * m);
  const grads = ls.map(() => new Float64Array(m));
  for (let i = 0; i < m; i++) {
    const x = Float64Array.from(psi0);
    x[i] += h;
    const fp = at(x);
    if (!fp) return none;
    for (let j = 0; j < m; j++) H[i * m + j] = (fp.g[j] - centre.g[j]) / h;
    grads.forEach((g, c) => (g[i] = (fp.v[c] - centre.v[c]) / h));
  }
  for (let i = 0; i < m; i++)
    for (let j = 0; j < i; j++) {
      const v = (H[i * m + j] + H[j * m + i]) / 2;
      H[i * m + j] = v;
      H[j * m + i] = v;
    }
  const df = grads.map((g, c) => {
    const hg = solveSymmetric(H, g, m);
    if (!hg) return null;
    let gAg = 0;
    for (let i = 0; i < m; i++) gAg += 2 * g[i] * hg[i];
    const v = centre.v[c];
    return gAg > 0 ? (2 * v * v) / gAg : null;
  });
  // var(log v_i) = A_ii = 2 (H^-1)_ii, so se(v_i) = v_i sqrt(A_ii)
  const logVarSe = (i: number): number | null => {
    const e = new Float64Array(m);
    e[i] = 1;
    const x = solveSymmetric(H, e, m);
    return x && x[i] > 0 ? Math.sqrt(2 * x[i]) : null;
  };
  const varianceSe = L.terms.map((_, k) => {
    const i = free.indexOf(k);
    const s = i < 0 ? null : logVarSe(1 + i);
    return s === null ? null : s * ev.sigma2 * ev.theta[k] ** 2;
  });
  const r = logVarSe(0);
  return { df, varianceSe, residualSe: r === null ? null : r * ev.sigma2 };
}

export interface TermTest {
  statistic: number;
  p: number;
  reducedLogLik: number;
  /** The refit without the term (its criterion is the profile's value at zero). */
  reducedCriterion: number;
}

/** Refit without term k; the statistic's null law is the 50:50 mixture of chi2_0 and chi2_1. */
export function likelihoodRatio(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, k: number, hooks: OptimiseHooks): TermTest {
  if (ev.theta[k] <= AT_ZERO) return { statistic: 0, p: 1, reducedLogLik: -ev.criterion / 2, reducedCriterion: ev.criterion };
  const start = Float64Array.from(ev.theta);
  start[k] = 0;
  const reduced = optimiseCrossed(d, L, start, [k], hooks).evaluation;
  const statistic = Math.max(0, reduced.criterion - ev.criterion);
  return { statistic, p: statistic > 0 ? 0.5 * chisqUpper(statistic, 1) : 1, reducedLogLik: -reduced.criterion / 2, reducedCriterion: reduced.criterion };
}

/**
 * Profile-likelihood interval for the variance of term k: the values v where the criterion,
 * minimised over everything else with the variance held at v, rises chi2_1(confidence) above
 * its minimum. The lower end is 0 when the refit without the term stays within that rise.
 */
export function profileVariance(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, k: number, confidence: number, test: TermTest | null, signal?: AbortSignal): { lower: number; upper: number } | null {
  const target = ev.criterion + chisqQuantile(confidence, 1);
  const vHat = ev.sigma2 * ev.theta[k] ** 2;
  const others = L.terms.map((_, j) => j).filter((j) => j !== k);
  let warm = Float64Array.from([Math.log(ev.sigma2), ...others.map((j) => ev.theta[j])]);
  const profileAt = (v: number): number => {
    if (signal?.aborted) throw new Error('one-stage fit cancelled');
    const f = (x: Float64Array): number => {
      const s2 = Math.exp(x[0]);
      const th = new Float64Array(L.terms.length);
      others.forEach((j, i) => (th[j] = Math.abs(x[1 + i])));
      th[k] = Math.sqrt(v / s2);
      const e = evaluateCrossed(d, L, th);
      return e ? unprofiledCriterion(e, s2, d.nObservations, L.p) : Infinity;
    };
    const r = nelderMead(f, warm, { step: 0.05, fTolerance: 1e-10, xTolerance: 1e-6, maxEvaluations: 3000 });
    warm = Float64Array.from(r.x);
    return r.value;
  };
  // upper end: double from the estimate (or a small start at zero) until past the target, then
  // bisect (on the log scale once the bracket is away from zero)
  // (a variance estimated at or next to zero starts from a small share of the residual variance)
  let lo = vHat > 0 ? vHat : 0;
  let hi = Math.max(vHat * 2, 1e-3 * ev.sigma2);
  let tries = 0;
  while (profileAt(hi) < target) {
    lo = hi;
    hi *= 2;
    if (++tries > 40) return null;
  }
  for (let i = 0; i < 12; i++) {
    const mid = lo > 0 ? Math.sqrt(lo * hi) : hi / 2;
    if (profileAt(mid) < target) lo = mid;
    else hi = mid;
  }
  const upper = lo > 0 ? Math.sqrt(lo * hi) : hi / 2;
  warm = Float64Array.from([Math.log(ev.sigma2), ...others.map((j) => ev.theta[j])]);
  let lower = 0;
  const atZero = test ? test.reducedCriterion : profileAt(0);
  if (vHat > 0 && atZero > target) {
    let a = 0;
    let b = vHat;
    for (let i = 0; i < 12; i++) {
      const mid = (Math.sqrt(a) + Math.sqrt(b)) ** 2 / 4;
      if (profileAt(mid) < target) b = mid;
      else a = mid;
    }
    lower = (Math.sqrt(a) + Math.sqrt(b)) ** 2 / 4;
  }
  return { lower, upper };
}
