// The multilevel models as bootstrap models for the pivot prediction: each simulates trial
// estimates from its fitted variances (site, trial within site and, crossed, year) and the
// trials' own sampling variances, and refits them from the fitted values (Fisher scoring for the
// nested model, projected scoring on the analytic gradient and average information for the
// crossed one), falling back to the pool's own searches when a fast refit does not settle.
import { refitSiteTrial } from './siteTrialScoring.js';
import type { LikelihoodKind, SiteGroup } from './siteTrialLikelihood.js';
import { crossedLogLik, type CrossedGroup } from './crossedYearLikelihood.js';
import { fitCrossedYear } from './fitCrossedYear.js';
import { crossedLocalRefit } from './crossedLocalRefit.js';
import type { PivotModel } from './bootstrapPivotPrediction.js';

/** Relative tolerance of each variance search in a refit: the pivot needs about four digits, not nine. */
const REFIT_TOLERANCE = 1e-6;

export interface FittedVariances {
  mu: number;
  siteTau2: number;
  trialTau2: number;
  /** Zero for the nested model. */
  yearTau2?: number;
}

function simulateInto(groups: readonly SiteGroup[], fitted: FittedVariances, normal: () => number, y: Float64Array[], yearEffect: (g: number, j: number) => number = () => 0): void {
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
  return fitted.mu + Math.sqrt(fitted.siteTau2 + fitted.trialTau2 + (fitted.yearTau2 ?? 0)) * normal();
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

export function crossedPivotModel(groups: readonly CrossedGroup[], years: number, fitted: FittedVariances, kind: LikelihoodKind, scale: number): PivotModel {
  const yearDraws = new Float64Array(years);
  const start = [fitted.yearTau2 ?? 0, fitted.siteTau2, fitted.trialTau2];
  // the groups once, their estimates re-pointed at each refit's arrays
  const data = groups.map((g) => ({ ...g }));
  return {
    simulate(normal, y) {
      const sdYear = Math.sqrt(fitted.yearTau2 ?? 0);
      for (let i = 0; i < years; i++) yearDraws[i] = sdYear * normal();
      simulateInto(groups, fitted, normal, y, (g, j) => yearDraws[groups[g].yearIndex[j]]);
      return newSiteEffect(fitted, normal);
    },
    refit(y) {
      data.forEach((g, i) => (g.y = y[i]));
      // order [year, site, trial], as fitCrossedYear searches them
      const local = crossedLocalRefit(data, years, kind, [0, 1, 2], start, scale);
      if (local) {
        const at = crossedLogLik(data, years, local[1], local[2], local[0], kind);
        return { mu: at.mu, muVariance: at.muVariance, between: local[0] + local[1] + local[2] };
      }
      const f = fitCrossedYear(data, years, kind, 0, false);
      return f.converged ? { mu: f.mu, muVariance: f.muVariance, between: f.siteTau2 + f.trialTau2 + f.yearTau2 } : null;
    },
  };
}
