// The new-site (in a new year) interval and probabilities of a multilevel pool: the bootstrap of
// the studentised prediction error by default, the plug-in t interval on request or when there
// are too few sites to refit; the plug-in interval is reported beside the bootstrap one.
import { normalCdf, tQuantile } from '../../stats/distributions.js';
import { bootstrapPivotPrediction, DEFAULT_PIVOT_DRAWS, type PivotFit, type PivotModel } from './bootstrapPivotPrediction.js';
import type { SiteLevelOptions, SiteLevelPrediction } from './types.js';

export const PIVOT_TEXT =
  'new-site interval and probabilities by parametric bootstrap of the studentised prediction error (Lawless & Fredette 2005): data sets drawn from the fitted model, each refitted, so the interval carries the uncertainty in every tau² and in the mean';

export function siteLevelPrediction(fitted: PivotFit, sites: number, sizes: readonly number[], model: () => PivotModel, options: SiteLevelOptions, notes: string[]): SiteLevelPrediction {
  const tMult = sites >= 3 ? tQuantile(0.5 + options.confidence / 2, sites - 2) : null;
  const sd = Math.sqrt(fitted.muVariance + fitted.between);
  const plugIn = { lower: tMult === null ? null : fitted.mu - tMult * sd, upper: tMult === null ? null : fitted.mu + tMult * sd };
  const probAbove = (x: number) => (sd > 0 ? 1 - normalCdf((x - fitted.mu) / sd) : fitted.mu > x ? 1 : 0);
  const plugInResult: SiteLevelPrediction = {
    method: 'plug-in-t', lower: plugIn.lower, upper: plugIn.upper, probPositive: probAbove(0), probAboveThreshold: probAbove(options.threshold),
    plugInT: plugIn, draws: null, seed: null, description: `new-site interval mu ± t(sites - 2) sqrt(SE² + tau²) with the variances plugged in (plug-in-t); the probabilities from the normal with those variances`,
  };
  if (options.prediction === 'plug-in-t') return plugInResult;
  if (sites < 3) {
    notes.push('the bootstrap new-site interval needs at least three sites: none is given');
    return { ...plugInResult, method: 'bootstrap-pivot', lower: null, upper: null };
  }
  const draws = options.predictionDraws ?? DEFAULT_PIVOT_DRAWS;
  const seed = options.predictionSeed ?? 1;
  const b = bootstrapPivotPrediction(model(), fitted, sizes, { confidence: options.confidence, thresholds: [0, options.threshold], draws, seed, signal: options.signal });
  if (b.failed > 0) notes.push(`${b.failed} of ${draws} bootstrap refits did not converge and were left out of the new-site prediction`);
  return {
    method: 'bootstrap-pivot', lower: b.lower, upper: b.upper, probPositive: b.probAbove[0], probAboveThreshold: b.probAbove[1],
    plugInT: plugIn, draws: b.draws, seed: b.seed, description: `${PIVOT_TEXT}; ${b.draws} draws, seed ${b.seed}`,
  };
}
