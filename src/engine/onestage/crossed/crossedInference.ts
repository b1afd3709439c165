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
import { crossedDerivatives, type CrossedDerivatives } from './crossedDerivatives.js';
import { profileNewton } from './profileNewton.js';

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

export function satterthwaite(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, ls: readonly Float64Array[], atOptimum: CrossedDerivatives | null = null): SatterthwaiteResult {
  const none: SatterthwaiteResult = { df: ls.map(() => null), varianceSe: L.terms.map(() => null), residualSe: null };
  const free = L.terms.map((_, k) => k).filter((k) => ev.theta[k] > AT_ZERO);
  const m = 1 + free.length;
  // Differences are taken in phi = (log sigma², log gamma_k) with gamma_k = sigma_k² / sigma²: along
  // log sigma² at fixed gamma nothing needs refactoring, so that row of the Hessian is exact,
  //   d²F/dphi_0² = r'H^-1r / sigma²,  d²F/dphi_0 dphi_k = gamma_k |Z_k'Py|² / sigma²,
  // and the rows of the ratios are forward differences (step 1e-5) of the analytic gradient
  // dF/dphi_k = gamma_k (tr(P Z_k Z_k') - |Z_k'Py|² / sigma²). The map to psi = (log sigma²,
  // log sigma_k²) is linear (phi_k = psi_k - psi_0), so H_psi = J' H_phi J exactly.
  const s2 = ev.sigma2;
  const gamma0 = free.map((k) => ev.theta[k] ** 2);
  const at = (gamma: readonly number[]): { g: Float64Array; c: number[]; rHr: number; q: Float64Array } | null => {
    const th = new Float64Array(L.terms.length);
    free.forEach((k, i) => (th[k] = Math.sqrt(gamma[i])));
    const reuse = atOptimum && gamma === gamma0 && L.terms.every((_, k) => free.includes(k) || ev.theta[k] === 0);
    const e = reuse ? ev : evaluateCrossed(d, L, th);
    if (!e) return null;
    const der = reuse ? atOptimum : crossedDerivatives(d, L, e, false);
    const g = new Float64Array(free.length);
    const q = new Float64Array(free.length);
    free.forEach((k, i) => {
      g[i] = gamma[i] * (der.trace[k] - der.quadratic[k] / s2);
      q[i] = der.quadratic[k];
    });
    return { g, c: contrastVariances(e, 1, L.p, ls), rHr: e.rHr, q };
  };
  const h = 1e-5;
  const centre = at(gamma0);
  if (!centre) return none;
  const n = free.length;
  const Hphi = new Float64Array(m * m);
  const gradPhi = ls.map((_, c) => {
    const g = new Float64Array(m);
    g[0] = s2 * centre.c[c];
    return g;
  });
  Hphi[0] = centre.rHr / s2;
  for (let i = 0; i < n; i++) {
    Hphi[1 + i] = Hphi[(1 + i) * m] = (gamma0[i] * centre.q[i]) / s2;
    const shifted = gamma0.slice();
    shifted[i] *= Math.exp(h);
    const fp = at(shifted);
    if (!fp) return none;
    for (let j = 0; j < n; j++) Hphi[(1 + i) * m + 1 + j] = (fp.g[j] - centre.g[j]) / h;
    gradPhi.forEach((g, c) => (g[1 + i] = (s2 * (fp.c[c] - centre.c[c])) / h));
  }
  for (let i = 1; i < m; i++)
    for (let j = 1; j < i; j++) {
      const v = (Hphi[i * m + j] + Hphi[j * m + i]) / 2;
      Hphi[i * m + j] = v;
      Hphi[j * m + i] = v;
    }
  // J = dphi/dpsi: identity with -1 down the first column below the top
  const H = new Float64Array(m * m);
  const Jcol = (row: number, col: number) => (row === col ? 1 : col === 0 ? -1 : 0);
  for (let a = 0; a < m; a++)
    for (let b = 0; b < m; b++) {
      let v = 0;
      for (let i = 0; i < m; i++) {
        const ja = Jcol(i, a);
        if (ja === 0) continue;
        for (let j = 0; j < m; j++) {
          const jb = Jcol(j, b);
          if (jb !== 0) v += ja * Hphi[i * m + j] * jb;
        }
      }
      H[a * m + b] = v;
    }
  const grads = gradPhi.map((gp) => {
    const g = new Float64Array(m);
    for (let a = 0; a < m; a++) for (let i = 0; i < m; i++) g[a] += Jcol(i, a) * gp[i];
    return g;
  });
  const centreV = centre.c.map((c) => s2 * c);
  const df = grads.map((g, c) => {
    const hg = solveSymmetric(H, g, m);
    if (!hg) return null;
    let gAg = 0;
    for (let i = 0; i < m; i++) gAg += 2 * g[i] * hg[i];
    const v = centreV[c];
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
  const thetaOf = (x: Float64Array): Float64Array => {
    const th = new Float64Array(L.terms.length);
    others.forEach((j, i) => (th[j] = Math.abs(x[1 + i])));
    return th;
  };
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
