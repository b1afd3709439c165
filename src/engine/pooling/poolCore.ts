// The intercept-only random-effects pool: the mean effect with its interval, tau², the
// new-site prediction interval and the predictive probabilities. Shared by the main entry
// point, the sensitivity analyses and the coverage simulation.
import { normalQuantile, normalUpper, tQuantile, tTwoSidedP, tUpper } from '../stats/distributions.js';
import { fitModel, FitSettings } from './modelFit.js';
import { interceptDesign } from './weightedFit.js';

export interface CorePool {
  k: number;
  estimate: number;
  /** SE used for the interval (KH-scaled under HKSJ). */
  se: number;
  /** Model-based SE 1 / sqrt(sum w). */
  seConventional: number;
  lower: number | null;
  upper: number | null;
  p: number | null;
  df: number | null;
  hksjScale: number | null;
  tau2: number | null;
  tau2Converged: boolean;
  iterations: number;
  atBoundary: boolean;
  weights: Float64Array;
  predictionLower: number | null;
  predictionUpper: number | null;
  probPositive: number | null;
  probAboveThreshold: number | null;
  notes: string[];
}

/** `tau2Start`: a nearby tau² to start ML/REML from (see estimateTau2). */
export function poolCore(y: ArrayLike<number>, v: ArrayLike<number>, settings: FitSettings, threshold: number, singleTrialDf: number | null = null, tau2Start?: number): CorePool {
  const k = y.length;
  if (k === 1) return singleTrial(y[0], Math.sqrt(v[0]), settings, singleTrialDf);
  const model = fitModel(y, v, interceptDesign(k), settings, tau2Start);
  const c = model.coefficients[0];
  if (c === null) throw new Error('poolCore: intercept aliased (cannot happen with k >= 1)');
  const tau2 = model.tau.tau2;
  const notes = [...model.notes];
  const prediction = predictive(c.estimate, c.seConventional, tau2, k, settings.confidence, threshold);
  if (prediction.note) notes.push(prediction.note);
  return {
    k,
    estimate: c.estimate,
    se: c.se,
    seConventional: c.seConventional,
    lower: c.lower,
    upper: c.upper,
    p: c.p,
    df: model.df,
    hksjScale: model.hksjScale,
    tau2: settings.tau2 === 'fixed' ? 0 : tau2,
    tau2Converged: model.tau.converged,
    iterations: model.tau.iterations,
    atBoundary: model.tau.atBoundary,
    weights: model.tau.fit.weights,
    ...prediction.values,
    notes,
  };
}

interface Predictive {
  values: Pick<CorePool, 'predictionLower' | 'predictionUpper' | 'probPositive' | 'probAboveThreshold'>;
  note: string | null;
}

/**
 * Higgins, Thompson & Spiegelhalter (2009, JRSS A 172:137-159): a new site's effect is
 * predicted by mu ± t_{k-2} sqrt(se² + tau²) with se the model-based SE of mu; the
 * probabilities come from that same predictive t distribution.
 */
export function predictive(mu: number, se: number, tau2: number, k: number, confidence: number, threshold: number): Predictive {
  if (k < 3) {
    return {
      values: { predictionLower: null, predictionUpper: null, probPositive: null, probAboveThreshold: null },
      note: 'Prediction interval and new-site probabilities need at least 3 trials (t on k - 2 df).',
    };
  }
  const df = k - 2;
  const sd = Math.sqrt(se * se + tau2);
  const crit = tQuantile(1 - (1 - confidence) / 2, df);
  return {
    values: {
      predictionLower: mu - crit * sd,
      predictionUpper: mu + crit * sd,
      probPositive: tUpper((0 - mu) / sd, df),
      probAboveThreshold: tUpper((threshold - mu) / sd, df),
    },
    note: null,
  };
}

function singleTrial(y: number, se: number, settings: FitSettings, df: number | null): CorePool {
  const useT = df !== null && df > 0;
  const crit = useT ? tQuantile(1 - (1 - settings.confidence) / 2, df) : normalQuantile(1 - (1 - settings.confidence) / 2);
  const z = y / se;
  return {
    k: 1,
    estimate: y,
    se,
    seConventional: se,
    lower: y - crit * se,
    upper: y + crit * se,
    p: useT ? tTwoSidedP(z, df) : 2 * normalUpper(Math.abs(z)),
    df: useT ? df : null,
    hksjScale: null,
    tau2: null,
    tau2Converged: true,
    iterations: 0,
    atBoundary: false,
    weights: new Float64Array([1 / (se * se)]),
    predictionLower: null,
    predictionUpper: null,
    probPositive: null,
    probAboveThreshold: null,
    notes: [
      `Only one trial: nothing is pooled; the estimate, SE and interval are that trial's own (${useT ? `t on its ${df} df` : 'normal'}).`,
      'tau², heterogeneity, the prediction interval and new-site probabilities cannot be estimated from one trial.',
    ],
  };
}
