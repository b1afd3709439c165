// Inference from the crossed fit: the shape of the Satterthwaite result (computed from the analytic
// observed information in satterthwaiteObserved.ts), the likelihood-ratio test of each term by a
// refit without it, and profile intervals for a variance by a bracketed search of the profiled
// criterion.
import { chisqQuantile, chisqUpper } from '../../stats/distributions.js';
import { nelderMead } from '../../rate/mixed/nelderMead.js';
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, unprofiledCriterion, type CrossedEvaluation } from './crossedLikelihood.js';
import { optimiseCrossed, type OptimiseHooks } from './optimiseCrossed.js';
import { profileNewton } from './profileNewton.js';

/** Terms whose relative sd is this small count as at zero (left out of the df calculation). */
export const AT_ZERO = 1e-5;

export interface SatterthwaiteResult {
  readonly df: (number | null)[];
  /** Standard error of each term's variance (delta method from A on the log scale); null at zero or when A fails. */
  readonly varianceSe: (number | null)[];
  readonly residualSe: number | null;
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
 * -2 REML log-likelihood with variance k held at v, as a function of x = [log residual variance,
 * the other terms' relative sds (sign ignored)] — what a profile point minimises.
 */
export function profileCriterion(d: CrossedData, L: CrossedLayout, k: number, v: number): (x: Float64Array) => number {
  const others = L.terms.map((_, j) => j).filter((j) => j !== k);
  return (x) => {
    const s2 = Math.exp(x[0]);
    const th = new Float64Array(L.terms.length);
    others.forEach((j, i) => (th[j] = Math.abs(x[1 + i])));
    th[k] = Math.sqrt(v / s2);
    const e = evaluateCrossed(d, L, th);
    return e ? unprofiledCriterion(e, s2, d.nObservations, L.p) : Infinity;
  };
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
  const thetaOf = (x: Float64Array): Float64Array => {
    const th = new Float64Array(L.terms.length);
    others.forEach((j, i) => (th[j] = Math.abs(x[1 + i])));
    return th;
  };
  const profileAt = (v: number): number => {
    if (signal?.aborted) throw new Error('one-stage fit cancelled');
    const f = profileCriterion(d, L, k, v);
    // Newton steps on the analytic derivatives first (profileNewton.ts); the simplex when they fail
    const nt = profileNewton(d, L, k, v, Math.exp(warm[0]), thetaOf(warm), AT_ZERO, signal);
    if (nt) {
      warm = Float64Array.from([Math.log(nt.sigma2), ...others.map((j) => nt.theta[j])]);
      return nt.value;
    }
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
