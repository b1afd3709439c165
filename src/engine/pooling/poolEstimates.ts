// Entry point of two-stage pooling: per-trial estimates and SEs in, the pooled mean,
// heterogeneity, new-site prediction, sensitivity and (optionally) meta-regression out.
import { cochranQ, tau2BasedShares } from './heterogeneity.js';
import { jsonSafe } from '../jsonSafe.js';
import { metaRegression } from './metaRegression.js';
import { intervalText, tau2Text } from './methodText.js';
import { newSitePrediction, type HooksForPrediction } from './newSitePrediction.js';
import { poolCore } from './poolCore.js';
import { qProfileInterval } from './qProfile.js';
import { sensitivityAnalyses } from './sensitivity.js';
import { validatePooling } from './validateItems.js';
import { interceptDesign } from './weightedFit.js';
import type { FitSettings } from './modelFit.js';
import type { PooledResult, PoolingItem, PoolingOptions } from './types.js';

export type { PooledResult, PoolingItem, PoolingOptions } from './types.js';

export function fitSettings(options: PoolingOptions): FitSettings {
  return { tau2: options.tau2, interval: options.interval, hksjFloor: options.hksjFloor ?? false, confidence: options.confidence };
}

/** `hooks`: cancel and progress for the bootstrap predictive distribution (main pool only). */
export function poolEstimates(items: readonly PoolingItem[], options: PoolingOptions, hooks: HooksForPrediction = {}): PooledResult {
  validatePooling(items, options);
  const settings = fitSettings(options);
  const y = items.map((it) => it.estimate);
  const v = items.map((it) => it.se * it.se);
  const k = items.length;
  const core = poolCore(y, v, settings, options.threshold, k === 1 ? (items[0].df ?? null) : null);
  const notes = [...core.notes];
  const het = cochranQ(y, v);
  const shares = tau2BasedShares(core.tau2, het.typicalVariance);
  let tau2Lower: number | null = null;
  let tau2Upper: number | null = null;
  if (k < 2) notes.push('No interval for tau² with one trial.');
  else if (options.tau2 === 'fixed') notes.push('Fixed-effect model: tau² is assumed zero, so no interval for it is given (Q and I² still describe heterogeneity).');
  else {
    const qp = qProfileInterval(y, v, interceptDesign(k), options.confidence, Math.max(core.tau2 ?? 0, 1e-8));
    tau2Lower = qp.lower;
    tau2Upper = qp.upper;
    if (qp.note) notes.push(qp.note);
  }
  const newSite = newSitePrediction(y, v, core, options, hooks);
  notes.push(...newSite.notes);
  let sumW = 0;
  for (const w of core.weights) sumW += w;
  const result: PooledResult = {
    estimate: core.estimate,
    se: core.se,
    lower: core.lower,
    upper: core.upper,
    p: core.p,
    tau2: core.tau2,
    tau: core.tau2 === null ? null : Math.sqrt(core.tau2),
    tau2Lower,
    tau2Upper,
    tau2AtBoundary: core.atBoundary,
    Q: het.Q,
    Qdf: het.Qdf,
    Qp: het.Qp,
    I2: het.I2,
    I2FromTau2: shares.I2,
    H2: het.H2,
    H2FromTau2: shares.H2,
    predictionLower: newSite.prediction.lower,
    predictionUpper: newSite.prediction.upper,
    probPositive: newSite.prediction.probPositive,
    probAboveThreshold: newSite.prediction.probAboveThreshold,
    prediction: newSite.prediction,
    k,
    df: core.df,
    hksjScale: core.hksjScale,
    method: {
      tau2: tau2Text(options, core),
      interval: intervalText(options, core),
      prediction: newSite.prediction.description,
      probabilities: `${newSite.prediction.probabilities} Threshold = ${options.threshold}.`,
      converged: core.tau2Converged,
      iterations: core.iterations,
    },
    weights: items.map((it, i) => ({ trial: it.trial, weight: core.weights[i], share: core.weights[i] / sumW })),
    sensitivity: sensitivityAnalyses(items, core, settings, options.threshold),
    notes,
  };
  if (options.moderators && options.moderators.length > 0) result.metaRegression = metaRegression(items, options.moderators, settings, options.threshold);
  return jsonSafe(result);
}
