// The local REML/ML refit of the crossed site-year model from a warm start, shared by the
// two-stage crossed pool's bootstrap and the one-stage crossed new-site-new-year bootstrap (so
// that both give the same draws): projected scoring on the analytic gradient and average
// information (crossedYearScore.ts) over the variances that are in the model, the others held
// at zero. Null when it does not settle (the caller then runs its global search).
import { crossedScore } from './crossedYearScore.js';
import type { CrossedGroup } from './crossedYearLikelihood.js';
import type { LikelihoodKind } from './siteTrialLikelihood.js';
import { projectedScoring } from './projectedScoring.js';

/**
 * @param active which of [year, site, trial] are searched (the rest held at zero), in that order
 * @param start their starting values, in the order of `active`
 * @returns the full [year, site, trial] at the maximum, or null
 */
export function crossedLocalRefit(groups: readonly CrossedGroup[], years: number, kind: LikelihoodKind, active: readonly number[], start: readonly number[], scale: number): number[] | null {
  const full = [0, 0, 0];
  const local = projectedScoring(
    (x) => {
      active.forEach((k, i) => (full[k] = x[i]));
      const s = crossedScore(groups, years, full[1], full[2], full[0], kind);
      return {
        value: s.logLik,
        gradient: active.map((k) => s.gradient[k]),
        information: active.flatMap((a) => active.map((b) => s.information[a * 3 + b])),
      };
    },
    start,
    scale,
  );
  if (!local) return null;
  const out = [0, 0, 0];
  active.forEach((k, i) => (out[k] = local.x[i]));
  return out;
}
