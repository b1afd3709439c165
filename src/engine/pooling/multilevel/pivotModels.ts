// The two multilevel models as bootstrap models for the pivot prediction: each simulates trial
// estimates from its fitted variances (site, trial within site and, crossed, year) and the trials'
// own sampling variances, and refits them the way the pool itself was fitted.
import { fitCrossedYear } from './fitCrossedYear.js';
import { refitSiteTrial } from './siteTrialScoring.js';
import type { CrossedGroup } from './crossedYearLikelihood.js';
import type { LikelihoodKind, SiteGroup } from './siteTrialLikelihood.js';
import type { PivotModel } from './bootstrapPivotPrediction.js';

/** Relative tolerance of each variance search in a refit: the pivot needs about four digits, not nine. */
const REFIT_TOLERANCE = 1e-6;

export interface FittedVariances {
  mu: number;
  siteTau2: number;
  trialTau2: number;
  /** Zero for the nested model. */
  yearTau2: number;
}

function simulateInto(groups: readonly SiteGroup[], fitted: FittedVariances, normal: () => number, y: Float64Array[], yearEffect: (g: number, j: number) => number): void {
  const sdSite = Math.sqrt(fitted.siteTau2);
  const sdTrial = Math.sqrt(fitted.trialTau2);
  for (let g = 0; g < groups.length; g++) {
    const site = sdSite * normal();
    const v = groups[g].v;
    const out = y[g];
    for (let j = 0; j < v.length; j++) out[j] = fitted.mu + site + yearEffect(g, j) + sdTrial * normal() + Math.sqrt(v[j]) * normal();
  }
}

function newSiteEffect(fitted: FittedVariances, normal: () => number): number {
  return fitted.mu + Math.sqrt(fitted.siteTau2 + fitted.trialTau2 + fitted.yearTau2) * normal();
}

export function nestedPivotModel(groups: readonly SiteGroup[], fitted: FittedVariances, kind: LikelihoodKind): PivotModel {
  return {
    simulate(normal, y) {
      simulateInto(groups, fitted, normal, y, () => 0);
      return newSiteEffect(fitted, normal);
    },
    refit(y) {
      // Fisher scoring from the generating values (the searches when it does not settle)
      const f = refitSiteTrial(groups.map((g, i) => ({ ...g, y: y[i] })), kind, fitted.siteTau2, fitted.trialTau2, REFIT_TOLERANCE);
      return f.converged ? { mu: f.mu, muVariance: f.muVariance, between: f.siteTau2 + f.trialTau2 } : null;
    },
  };
}

export function crossedPivotModel(groups: readonly CrossedGroup[], years: number, fitted: FittedVariances, kind: LikelihoodKind): PivotModel {
  const yearDraws = new Float64Array(years);
  return {
    simulate(normal, y) {
      const sdYear = Math.sqrt(fitted.yearTau2);
      for (let i = 0; i < years; i++) yearDraws[i] = sdYear * normal();
      simulateInto(groups, fitted, normal, y, (g, j) => yearDraws[groups[g].yearIndex[j]]);
      return newSiteEffect(fitted, normal);
    },
    refit(y) {
      // chisqCut is only used by the profile intervals, which are not asked for here
      const f = fitCrossedYear(groups.map((g, i) => ({ ...g, y: y[i] })), years, kind, 0, false, REFIT_TOLERANCE);
      return f.converged ? { mu: f.mu, muVariance: f.muVariance, between: f.siteTau2 + f.trialTau2 + f.yearTau2 } : null;
    },
  };
}
