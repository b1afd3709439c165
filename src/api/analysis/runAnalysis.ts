// One analysis from a spec: trial stage for every trial, two-stage pooling of each contrast,
// the one-stage mixed model, their agreement, and the rate response. Pure orchestration:
// the numbers come from src/engine.
import { resolveContrast, type ResolvedContrast } from '../../engine/contrasts/resolve.js';
import type { NetworkInput, TreatmentInfo, TrialInput } from '../../engine/types.js';
import { analyzeTrial } from '../../engine/trial/analyzeTrial.js';
import { poolEstimates } from '../../engine/pooling/poolEstimates.js';
import { analyzeRateResponse } from '../../engine/rate/analyzeRateResponse.js';
import { twoStageSchema, type AnalysisSpec } from '../../spec/analysisSpec.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import { compareStages } from './agreement.js';
import { RECOMMENDATION_CAUTIONS } from './cautions.js';
import { applyExclusions } from './exclusions.js';
import { contrastUnits } from './contrastUnits.js';
import { checkSpecAgainstData } from './checkSpec.js';
import { networkLogOffset, transformNetwork } from './transformNetwork.js';
import type { TrialStageEntry, PooledEntry, ReportDetail, ReportOf } from './report.js';
import { summariseTrial, type TrialSummary } from '../../engine/trial/trialSummary.js';
import { resolveForTrial } from '../../engine/contrasts/perTrial.js';
import { testedTreatments } from './testedTreatments.js';
import { nothingToPool } from './nothingToPool.js';
import { notComparable } from './stageComparability.js';
import { treatedSetNote } from './treatedSets.js';
import { checkNetwork } from './networkChecks.js';
import { siteAmountsWarning } from './siteAmounts.js';
import { compactPooled } from '../../engine/pooling/compactPooled.js';
import { addSiteLevels } from './sitePooling.js';
import { TrialContrastCache } from './trialContrastCache.js';
import { runOneStage } from './oneStageFit.js';

/** What pooling reads from a trial entry, full or summarised. */
type PoolableTrial = TrialStageEntry | TrialSummary;

/**
 * `detail`: 'summary' (default) keeps each trial in summary as soon as it is analysed, so a large
 * network never holds every plot's diagnostics; 'plots' keeps the full analyses.
 */
export function runAnalysis(input: NetworkInput, spec: AnalysisSpec, ctx?: CallContext): Omit<ReportOf<'summary'>, 'provenance'>;
export function runAnalysis<D extends ReportDetail>(input: NetworkInput, spec: AnalysisSpec, ctx: CallContext | undefined, detail: D): Omit<ReportOf<D>, 'provenance'>;
export function runAnalysis(input: NetworkInput, spec: AnalysisSpec, ctx?: CallContext, detail: ReportDetail = 'summary'): Omit<ReportOf<ReportDetail>, 'provenance'> {
  const warnings: string[] = [];
  checkSpecAgainstData(spec, input);
  const network = applyExclusions(input, spec.exclude, warnings);
  if (network.trials.length === 0) throw new ManyfieldError('invalid-input', `no trials hold data for trait "${network.trait}"`);
  const control = spec.control ?? network.control;
  // One log offset for every trial and the one-stage model, so ratios mean the same everywhere.
  const logOffset = networkLogOffset(network, spec);
  const contrasts = spec.contrasts.map((c) => {
    try {
      return resolveContrast(c, network.treatments, control, network.factors);
    } catch (e) {
      throw new ManyfieldError('invalid-argument', (e as Error).message);
    }
  });

  const tested = network.trials.map((t) => testedTreatments(t, network.treatments));
  warnings.push(...checkNetwork(network, tested).warnings);
  const amounts = siteAmountsWarning(network);
  if (amounts) warnings.push(amounts);

  // The trial stage feeds the two-stage pooling; a spec that turns pooling off (twoStage: null)
  // asks for the one-stage model alone and skips it.
  const trials: PoolableTrial[] = [];
  // A trial's contrast meaning equal to its pool's is carried once, by the pool (trialSummary.ts).
  const sharedMeanings = new Map(contrasts.map((c) => [c.name, c.meaning]));
  const resolved = new TrialContrastCache();
  if (spec.twoStage !== null) network.trials.forEach((trial, i) => {
    throwIfCancelled(ctx);
    ctx?.onProgress?.({ stage: 'trial-stage', step: trial.trial, fraction: i / network.trials.length });
    const entry = analyseOneTrial(trial, network, contrasts, spec, logOffset, resolved, tested[i], detail === 'plots');
    trials.push(detail === 'plots' ? entry : summariseTrial(entry, sharedMeanings));
  });

  const pooled = spec.twoStage === null ? [] : addSiteLevels(poolContrasts(trials, contrasts, network, spec, warnings, ctx), trials, network, spec, warnings, ctx);

  let oneStage: ReturnType<typeof runOneStage> | null = null;
  if (spec.oneStage !== null) {
    throwIfCancelled(ctx);
    const modelled = transformNetwork(network, spec.transform, logOffset);
    oneStage = runOneStage(modelled, contrasts, spec, {
      onProgress: (e) => ctx?.onProgress?.({ stage: 'one-stage', step: `iteration ${e.iteration}`, fraction: null }),
      signal: ctx?.signal,
    });
  }

  const notCompared = new Map(spec.contrasts.flatMap((c) => {
    const note = notComparable(c, network, tested);
    return note === null ? [] : [[c.name, note] as const];
  }));
  const treatedSets = new Map(spec.contrasts.flatMap((c) => {
    const note = treatedSetNote(c, network, tested, control);
    return note === null ? [] : [[c.name, note] as const];
  }));
  const agreement = oneStage && pooled.length > 0 ? compareStages(oneStage.contrasts, pooled, warnings, notCompared, treatedSets) : [];

  let rateResponse: ReturnType<typeof analyzeRateResponse> | null = null;
  if (spec.rateResponse) {
    throwIfCancelled(ctx);
    const r = spec.rateResponse;
    rateResponse = analyzeRateResponse(network, { ...r, confidence: spec.confidence }, {
      onProgress: (e) => ctx?.onProgress?.({ stage: 'rate-response', step: e.stage, fraction: e.fraction }),
      signal: ctx?.signal,
    });
  }

  const common = {
    trait: network.trait,
    unit: network.unit ?? null,
    settings: { transform: spec.transform, confidence: spec.confidence, threshold: spec.threshold },
    contrastUnits: contrastUnits(spec, network),
    trialsAnalysed: network.trials.length,
    oneStage,
    agreement,
    rateResponse,
    warnings,
    cautions: rateResponse ? RECOMMENDATION_CAUTIONS : [],
  };
  if (detail === 'plots') return { detail: 'plots', ...common, twoStage: { trials: trials as TrialStageEntry[], pooled } };
  return { detail: 'summary', ...common, twoStage: { trials: trials as TrialSummary[], pooled: pooled.map(compactPooled) } };
}

/**
 * One trial's full analysis, as in the report with detail 'plots' (also recomputed on demand for
 * a saved analysis). `cache` shares the contrasts resolved for trials that tested the same
 * treatments; `present`, when given, is testedTreatments(trial, network.treatments).
 */
export function analyseOneTrial(
  trial: TrialInput,
  network: NetworkInput,
  contrasts: readonly ResolvedContrast[],
  spec: AnalysisSpec,
  logOffset: number | undefined,
  cache?: TrialContrastCache,
  present: readonly TreatmentInfo[] = testedTreatments(trial, network.treatments),
  listPlots = true,
): TrialStageEntry {
  const control = spec.control ?? network.control;
  const resolve = () => contrasts.map((c, i) => resolveForTrial(spec.contrasts[i], c, present, control, network.factors));
  const own = cache ? cache.resolve(present, resolve) : resolve();
  const result = analyzeTrial(trial, network.treatments, own, {
    transform: spec.transform,
    logOffset,
    confidence: spec.confidence,
    pairwise: spec.pairwise,
    traitKind: network.traitKind,
    listPlots,
  });
  // The result is this call's own object (result.trial is trial.trial already): the trial's
  // identity is added to it rather than copying every field into a new object per trial.
  return Object.assign(result, { site: trial.site ?? null, year: trial.year ?? null, design: trial.design });
}

function poolContrasts(trials: readonly PoolableTrial[], contrasts: readonly ResolvedContrast[], network: NetworkInput, spec: AnalysisSpec, warnings: string[], ctx?: CallContext): PooledEntry[] {
  return contrasts.map((c) => poolOneContrast(trials, c, network, spec, warnings, ctx)).filter((p): p is PooledEntry => p !== null);
}

/** One contrast pooled over the trials that carry it; null (with a warning saying why) when none does. */
function poolOneContrast(trials: readonly PoolableTrial[], contrast: ResolvedContrast, network: NetworkInput, spec: AnalysisSpec, warnings: string[], ctx?: CallContext): PooledEntry | null {
  const options = spec.twoStage ?? twoStageSchema.parse({});
  const covariatesByTrial = new Map(network.trials.map((t) => [t.trial, t.covariates ?? {}]));
  const yearByTrial = new Map(network.trials.map((t) => [t.trial, t.year ?? null]));
  throwIfCancelled(ctx);
  const items = [];
  const left: string[] = [];
  for (const t of trials) {
    const c = t.contrasts.find((x) => x.name === contrast.name);
    if (!c || !('estimate' in c) || c.estimate === null || c.se === null || !(c.se > 0)) {
      left.push(`${t.trial} (${c && 'reason' in c ? c.reason : 'not estimable'})`);
      continue;
    }
    items.push({ trial: t.trial, estimate: c.estimate, se: c.se, df: c.df, year: yearByTrial.get(t.trial) ?? null, covariates: covariatesByTrial.get(t.trial) ?? {} });
  }
  if (items.length === 0) {
    warnings.push(nothingToPool(contrast, left, trials.length));
    return null;
  }
  if (left.length > 0)
    warnings.push(`contrast "${contrast.name}": pooled over ${items.length} of ${trials.length} trials; left out, with the reason: ${left.join('; ')}`);
  const result = poolEstimates(items, { tau2: options.tau2, interval: options.interval, hksjFloor: options.hksjFloor, confidence: spec.confidence, threshold: spec.threshold, moderators: spec.moderators, prediction: options.prediction, predictionDraws: options.predictionDraws, predictionSeed: options.predictionSeed }, {
    signal: ctx?.signal,
    onProgress: (f) => ctx?.onProgress?.({ stage: 'new-site prediction', step: contrast.name, fraction: f }),
  });
  return { name: contrast.name, meaning: contrast.meaning, leftOut: left, ...result };
}
