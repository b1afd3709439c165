// Site, year and trial-within-site tau² crossed (site and year crossed, trials nested in sites):
// REML or ML by nested one-dimensional searches, profile-likelihood intervals for each tau².
import { crossedLogLik, type CrossedGroup } from './crossedYearLikelihood.js';
import { nestedMaximum, nestedProfileInterval } from './nestedMaximum.js';
import { searchUpper } from './fitSiteTrial.js';
import type { LikelihoodKind } from './siteTrialLikelihood.js';

export interface CrossedEstimates {
  siteTau2: number;
  trialTau2: number;
  yearTau2: number;
  logLik: number;
  mu: number;
  muVariance: number;
  converged: boolean;
  /** Null when the profile intervals were not asked for. */
  intervals: { site: Interval; trial: Interval; year: Interval } | null;
}

interface Interval {
  lower: number | null;
  upper: number | null;
}

/** Order of the searched vector: [yearTau2, siteTau2, trialTau2] (year outermost: it is the costliest to vary). */
export function fitCrossedYear(groups: readonly CrossedGroup[], years: number, kind: LikelihoodKind, chisqCut: number, withIntervals = true): CrossedEstimates {
  const upper = searchUpper(groups);
  const ll = (x: readonly number[]) => crossedLogLik(groups, years, x[1], x[2], x[0], kind).logLik;
  const best = nestedMaximum(ll, 3, upper);
  const [yearTau2, siteTau2, trialTau2] = best.x;
  const at = crossedLogLik(groups, years, siteTau2, trialTau2, yearTau2, kind);
  const interval = (which: number) => nestedProfileInterval(ll, 3, upper, best.x, at.logLik, which, chisqCut / 2);
  return {
    siteTau2,
    trialTau2,
    yearTau2,
    logLik: at.logLik,
    mu: at.mu,
    muVariance: at.muVariance,
    converged: best.x.every((v) => v < upper) && Number.isFinite(at.logLik),
    intervals: withIntervals ? { year: interval(0), site: interval(1), trial: interval(2) } : null,
  };
}
