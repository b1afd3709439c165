// The one-stage model a spec asks for: the per-trial engine for trial, block and
// treatment-by-trial terms; the crossed fitter when site or year terms (or fixed years) are named.
import type { ResolvedContrast } from '../../engine/contrasts/resolve.js';
import { fitOneStage, type OneStageHooks, type OneStageResult } from '../../engine/onestage/fitOneStage.js';
import { fitCrossed } from '../../engine/onestage/crossed/fitCrossed.js';
import { fitCrossedPerTrialResidual } from '../../engine/onestage/crossed/perTrialResidualFit.js';
import { CrossedDataError, crossedData } from '../../engine/onestage/crossed/crossedData.js';
import { withSiteYearNewSite } from '../../engine/onestage/crossed/siteYearNewSite.js';
import { needsCrossedFit, type CrossedTerm } from '../../engine/onestage/crossed/terms.js';
import { RANDOM_TERMS, type RandomTerm } from '../../engine/onestage/types.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { oneStageSchema } from '../../spec/analysisSpec.js';
import { ManyfieldError } from '../result.js';

export function runOneStage(network: NetworkInput, contrasts: readonly ResolvedContrast[], spec: AnalysisSpec, hooks: OneStageHooks): OneStageResult {
  const options = spec.oneStage ?? oneStageSchema.parse({});
  if (!needsCrossedFit(options.random, options.yearAsFixed)) {
    const random = options.random.filter((t): t is RandomTerm => (RANDOM_TERMS as readonly string[]).includes(t));
    return fitOneStage(network, contrasts, { random, residual: options.residual, df: options.df, confidence: spec.confidence, lrt: options.lrt, profile: options.profile, covariates: options.covariates, newSite: { method: options.prediction, threshold: spec.threshold, draws: options.predictionDraws, seed: options.predictionSeed } }, hooks);
  }
  if (options.covariates.length > 0)
    throw new ManyfieldError('invalid-argument', 'oneStage: trial covariates are not yet available with site or year terms; leave oneStage.covariates empty');
  try {
    // the plots as the crossed model reads them, built once for the fit and the new-site prediction
    const data = crossedData(network, options.random as CrossedTerm[], options.yearAsFixed);
    const crossedOptions = { random: options.random as CrossedTerm[], yearAsFixed: options.yearAsFixed, df: options.df, confidence: spec.confidence, lrt: options.lrt, profile: options.profile };
    const fit = options.residual === 'per-trial' ? fitCrossedPerTrialResidual(network, contrasts, crossedOptions, hooks, data) : fitCrossed(network, contrasts, crossedOptions, hooks, data);
    return withSiteYearNewSite(fit, network, contrasts, { data, random: options.random as CrossedTerm[], yearAsFixed: options.yearAsFixed, method: options.prediction, confidence: spec.confidence, threshold: spec.threshold, draws: options.siteLevelDraws, seed: options.predictionSeed, signal: hooks.signal, onProgress: (_c, f) => hooks.onProgress?.({ stage: 'new-site-in-a-new-year bootstrap', iteration: Math.round(f * options.siteLevelDraws), criterion: f }) });
  } catch (e) {
    if (e instanceof CrossedDataError) throw new ManyfieldError('invalid-argument', e.message);
    throw e;
  }
}
