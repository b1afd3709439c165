// REML (or ML) estimates of the site and trial-within-site tau², and their profile-likelihood
// intervals. Two variance components: the trial tau² is searched in an outer one-dimensional
// maximisation of the likelihood profiled over the site tau² (an inner one), each by Brent's
// method on [0, upper] with the zero boundary compared explicitly.
import { brentMaximum } from './brentMaximum.js';
import { brentRoot } from '../rootFinding.js';
import { siteTrialLogLik, type LikelihoodKind, type SiteGroup } from './siteTrialLikelihood.js';

export interface SiteTrialEstimates {
  siteTau2: number;
  trialTau2: number;
  logLik: number;
  mu: number;
  muVariance: number;
  /** Likelihood evaluations used. */
  evaluations: number;
  /** Upper end of the search for each tau²; an estimate there is reported as unconverged. */
  upper: number;
  converged: boolean;
}

/** A bound on each tau² no REML or ML estimate can reach: ten times the spread of the estimates plus the largest sampling variance. */
export function searchUpper(groups: readonly SiteGroup[]): number {
  let n = 0;
  let sum = 0;
  let sumSq = 0;
  let vMax = 0;
  for (const g of groups)
    for (let j = 0; j < g.y.length; j++) {
      n++;
      sum += g.y[j];
      sumSq += g.y[j] * g.y[j];
      vMax = Math.max(vMax, g.v[j]);
    }
  const variance = n > 1 ? Math.max(0, (sumSq - (sum * sum) / n) / (n - 1)) : 0;
  return 10 * (variance + vMax) + 1e-12;
}

/** relTol: the searches' relative tolerance (looser for bootstrap refits, which need a few digits). */
export function fitSiteTrial(groups: readonly SiteGroup[], kind: LikelihoodKind, relTol = 1e-9): SiteTrialEstimates {
  const upper = searchUpper(groups);
  let evaluations = 0;
  const ll = (s: number, t: number) => {
    evaluations++;
    return siteTrialLogLik(groups, s, t, kind).logLik;
  };
  const siteGivenTrial = (t: number) => brentMaximum((s) => ll(s, t), 0, upper, relTol);
  const outer = brentMaximum((t) => siteGivenTrial(t).value, 0, upper, relTol);
  const trialTau2 = outer.x;
  const siteTau2 = siteGivenTrial(trialTau2).x;
  const at = siteTrialLogLik(groups, siteTau2, trialTau2, kind);
  const converged = siteTau2 < upper && trialTau2 < upper && Number.isFinite(at.logLik);
  return { siteTau2, trialTau2, logLik: at.logLik, mu: at.mu, muVariance: at.muVariance, evaluations, upper, converged };
}

export interface ProfileInterval {
  lower: number | null;
  upper: number | null;
}

/**
 * Profile-likelihood interval for one tau²: the values where the likelihood maximised over the
 * other tau² falls chi-square(1, confidence) / 2 below its maximum. The lower end is 0 when the
 * profile at zero is still above that level. Null where no end is found below 1e6 times the search bound.
 */
export function profileInterval(groups: readonly SiteGroup[], kind: LikelihoodKind, fit: SiteTrialEstimates, which: 'site' | 'trial', chisqCut: number): ProfileInterval {
  const cutoff = fit.logLik - chisqCut / 2;
  const profile = (x: number) => {
    const other = brentMaximum((o) => (which === 'site' ? siteTrialLogLik(groups, x, o, kind) : siteTrialLogLik(groups, o, x, kind)).logLik, 0, Math.max(fit.upper, 2 * x));
    return other.value - cutoff;
  };
  const hat = which === 'site' ? fit.siteTau2 : fit.trialTau2;
  let lower: number | null = 0;
  if (hat > 0 && profile(0) < 0) lower = brentRoot(profile, 0, hat, { xTol: 1e-12 * Math.max(hat, 1e-300) });
  let hi = Math.max(hat * 2, fit.upper / 10, 1e-8);
  let upper: number | null = null;
  for (let i = 0; i < 80; i++) {
    if (profile(hi) < 0) {
      upper = brentRoot(profile, hat, hi, { xTol: 1e-10 * hi });
      break;
    }
    hi *= 2;
    if (hi > fit.upper * 1e6) break;
  }
  return { lower, upper };
}
