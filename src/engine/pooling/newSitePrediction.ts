// Which new-site prediction a pool reports, and the words that say how it was made. The chosen
// method's values fill the contract keys (predictionLower/Upper, probPositive,
// probAboveThreshold); the plug-in t interval is always carried alongside for comparison.
import { bootstrapPrediction, DEFAULT_PREDICTION_DRAWS, DEFAULT_PREDICTION_SEED } from './predictiveDistribution.js';
import { PREDICTION_TEXT, PROBABILITY_TEXT } from './methodText.js';
import type { CorePool } from './poolCore.js';
import type { NewSitePrediction, PoolingOptions, PredictionMethod } from './types.js';

export const PREDICTION_METHODS: readonly PredictionMethod[] = ['bootstrap-tau2', 'plug-in-t'];

export const BOOTSTRAP_TEXT =
  'New-site prediction interval: 2.5% and 97.5% points (for 95%) of a parametric bootstrap of the true effect at a new site that carries the uncertainty in tau² (Nagashima, Noma & Furukawa 2019, Stat Methods Med Res 28:1689-1702): each draw takes tau² from its confidence distribution (the generalised Q set equal to a random chi-square(k - 1) quantile, zero when Q at zero is already below it), the mean from the weighted mean at that tau² minus t(k - 1) × its Hartung–Knapp SE, and the site effect from N(mean, tau²). It does not use the tau² estimate or the interval method chosen for the mean. Assumes normally distributed site effects and a new site exchangeable with the sites pooled.';

export const BOOTSTRAP_PROBABILITY_TEXT =
  'Probabilities that the true effect at a new site is above 0 and above the threshold, from the same bootstrap predictive distribution (averaging the exact normal probability given each draw of tau² and the mean). They describe true site effects, not the noisier estimate a single new trial would report.';

export interface HooksForPrediction {
  signal?: AbortSignal;
  onProgress?: (fraction: number) => void;
}

export function newSitePrediction(y: readonly number[], v: readonly number[], core: CorePool, options: PoolingOptions, hooks: HooksForPrediction = {}): { prediction: NewSitePrediction; notes: string[] } {
  const requested = options.prediction ?? 'bootstrap-tau2';
  const plugInT = { lower: core.predictionLower, upper: core.predictionUpper, probPositive: core.probPositive, probAboveThreshold: core.probAboveThreshold };
  const notes: string[] = [];
  const plain = (method: PredictionMethod, text: string): NewSitePrediction => ({
    method,
    ...plugInT,
    draws: null,
    seed: null,
    description: text,
    probabilities: PROBABILITY_TEXT,
    plugInT,
  });
  if (requested === 'plug-in-t' || core.k < 3) return { prediction: plain('plug-in-t', `${PREDICTION_TEXT} (method "plug-in-t": tau² plugged in as if known).`), notes };
  if (options.tau2 === 'fixed') {
    notes.push('Fixed-effect model: the new-site interval is the plug-in t interval with tau² = 0 (the bootstrap over the confidence distribution of tau² would contradict the assumption of no heterogeneity).');
    return { prediction: plain('plug-in-t', `${PREDICTION_TEXT} (method "plug-in-t" with tau² = 0, as the fixed-effect model assumes).`), notes };
  }
  const draws = options.predictionDraws ?? DEFAULT_PREDICTION_DRAWS;
  const seed = options.predictionSeed ?? DEFAULT_PREDICTION_SEED;
  const b = bootstrapPrediction(y, v, { confidence: options.confidence, threshold: options.threshold, draws, seed, signal: hooks.signal, onProgress: hooks.onProgress });
  return {
    prediction: {
      method: 'bootstrap-tau2',
      lower: b.lower,
      upper: b.upper,
      probPositive: b.probPositive,
      probAboveThreshold: b.probAboveThreshold,
      draws: b.draws,
      seed: b.seed,
      description: `${BOOTSTRAP_TEXT} Method "bootstrap-tau2": ${b.draws} draws, seed ${b.seed}; confidence mass of tau² at zero ${(100 * b.tau2MassAtZero).toFixed(1)}%.`,
      probabilities: BOOTSTRAP_PROBABILITY_TEXT,
      plugInT,
    },
    notes,
  };
}
