// The site-and-trial model as a bootstrap model for the pivot prediction: it simulates trial
// estimates from its fitted variances (site, trial within site) and the trials' own sampling
// variances, and refits them by Fisher scoring from the fitted values.
import { refitSiteTrial } from './siteTrialScoring.js';
import type { LikelihoodKind, SiteGroup } from './siteTrialLikelihood.js';
import type { PivotModel } from './bootstrapPivotPrediction.js';

/** Relative tolerance of each variance search in a refit: the pivot needs about four digits, not nine. */
const REFIT_TOLERANCE = 1e-6;

export interface FittedVariances {
  mu: number;
  siteTau2: number;
  trialTau2: number;
}

function simulateInto(groups: readonly SiteGroup[], fitted: FittedVariances, normal: () => number, y: Float64Array[]): void {
  const sdSite = Math.sqrt(fitted.siteTau2);
  const sdTrial = Math.sqrt(fitted.trialTau2);
  for (let g = 0; g < groups.length; g++) {
    const site = sdSite * normal();
    const v = groups[g].v;
    const out = y[g];
    for (let j = 0; j < v.length; j++) out[j] = fitted.mu + site + sdTrial * normal() + Math.sqrt(v[j]) * normal();
  }
}

function newSiteEffect(fitted: FittedVariances, normal: () => number): number {
  return fitted.mu + Math.sqrt(fitted.siteTau2 + fitted.trialTau2) * normal();
}

export function nestedPivotModel(groups: readonly SiteGroup[], fitted: FittedVariances, kind: LikelihoodKind): PivotModel {
  return {
    simulate(normal, y) {
      simulateInto(groups, fitted, normal, y);
      return newSiteEffect(fitted, normal);
    },
    refit(y) {
      // Fisher scoring from the generating values (the searches when it does not settle)
      const f = refitSiteTrial(groups.map((g, i) => ({ ...g, y: y[i] })), kind, fitted.siteTau2, fitted.trialTau2, REFIT_TOLERANCE);
      return f.converged ? { mu: f.mu, muVariance: f.muVariance, between: f.siteTau2 + f.trialTau2 } : null;
    },
  };
}
