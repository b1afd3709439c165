// New-site prediction from the one-stage model, for each contrast l'beta. In the model a trial's
// true contrast is l'beta + l'u, u ~ N(0, sigma²_TxT I) its treatment-by-trial effects, so across
// sites the contrast varies with variance tau²_l = sigma²_TxT * sum l_j².
//
// 'plug-in-t': estimate ± t(T - 2) sqrt(se² + tau²_l), T trials, tau²_l at the REML estimate --
// the two-stage plug-in interval written in one-stage quantities (our construction).
// 'bootstrap-tau2' (our construction following Nagashima, Noma & Furukawa 2019, reasoned rather
// than published for the one-stage model): the uncertainty in tau²_l comes from the confidence
// distribution of the generalised Q built on the trials' own estimates of the contrast (each
// trial's fixed-effects fit, with its SE): under the one-stage model those have variance
// se_i² + tau²_l, so the distribution is one for the same tau²_l. Each draw takes tau²_l*, then the
// mean as estimate - t(df) x se x sqrt(W(tau²_l) / W(tau²_l*)) (df the contrast's own
// Satterthwaite / Kenward–Roger df; W = sum 1/(se_i² + tau²) rescales the SE to the drawn
// heterogeneity), then the new site from N(mean, tau²_l*). Trials without their own estimate
// (a treatment missing, no residual df) do not enter the confidence distribution.
import { tQuantile, tUpper } from '../stats/distributions.js';
import { bootstrapPrediction } from '../pooling/predictiveDistribution.js';
import type { PredictionMethod } from '../pooling/types.js';
import { qProfileInterval } from '../pooling/qProfile.js';
import { interceptDesign } from '../pooling/weightedFit.js';
import type { ContrastReport, TrialContrastReport } from './types.js';

export interface OneStageNewSiteOptions {
  readonly method: PredictionMethod;
  readonly confidence: number;
  readonly threshold: number;
  readonly draws: number;
  readonly seed: number;
  readonly signal?: AbortSignal;
}

export interface OneStageNewSite {
  name: string;
  /** Method that made lower/upper and the probabilities. */
  method: PredictionMethod;
  /** sigma²_TxT * sum l², the contrast's between-site variance at the REML estimate. */
  tau2: number | null;
  lower: number | null;
  upper: number | null;
  probPositive: number | null;
  probAboveThreshold: number | null;
  /** Trials whose own estimate entered the confidence distribution of tau² (bootstrap only). */
  trialsUsed: number | null;
  plugInT: { lower: number | null; upper: number | null; probPositive: number | null; probAboveThreshold: number | null };
  draws: number | null;
  seed: number | null;
  note: string;
}

export function oneStageNewSite(
  contrast: ContrastReport,
  l: Float64Array | null,
  sigma2TT: number | null,
  trialContrasts: readonly TrialContrastReport[],
  nTrials: number,
  options: OneStageNewSiteOptions,
): OneStageNewSite {
  const empty = { lower: null, upper: null, probPositive: null, probAboveThreshold: null };
  const base = { name: contrast.name, plugInT: empty, draws: null, seed: null, trialsUsed: null };
  if (!l || contrast.estimate === null || contrast.se === null || contrast.df === null) return { ...base, method: 'plug-in-t', tau2: null, ...empty, note: 'not estimable' };
  if (nTrials < 3) return { ...base, method: 'plug-in-t', tau2: null, ...empty, note: 'a new-site interval needs at least 3 trials' };
  let sumSquares = 0;
  for (const x of l) sumSquares += x * x;
  const tau2 = (sigma2TT ?? 0) * sumSquares;
  const sd = Math.sqrt(contrast.se * contrast.se + tau2);
  const crit = tQuantile(1 - (1 - options.confidence) / 2, nTrials - 2);
  const plugInT = {
    lower: contrast.estimate - crit * sd,
    upper: contrast.estimate + crit * sd,
    probPositive: tUpper(-contrast.estimate / sd, nTrials - 2),
    probAboveThreshold: tUpper((options.threshold - contrast.estimate) / sd, nTrials - 2),
  };
  const plain = (note: string): OneStageNewSite => ({ ...base, method: 'plug-in-t', tau2, ...plugInT, plugInT, note });
  if (options.method === 'plug-in-t') return plain('plug-in-t: estimate ± t(trials - 2) sqrt(se² + sigma²_TxT sum l²), the variance taken as known');
  if (sigma2TT === null) return plain('plug-in-t with no between-site variance: the model has no treatment-by-trial term, so it assumes the contrast is the same at every site');
  const own = trialContrasts.filter((t) => t.raw !== null && t.rawSe !== null && t.rawSe > 0);
  if (own.length < 3) return plain('plug-in-t: fewer than 3 trials have their own estimate of this contrast, too few for the confidence distribution of its between-site variance');
  const y = own.map((t) => t.raw as number);
  const v = own.map((t) => (t.rawSe as number) ** 2);
  // Does the model's common treatment-by-trial variance fit this contrast? Compare tau²_l with the
  // Q-profile interval from the trials' own estimates (the 2.5% and 97.5% points of the same
  // confidence distribution the bootstrap draws from).
  const range = qProfileInterval(y, v, interceptDesign(y.length), options.confidence, Math.max(tau2, 1e-8));
  const misfit =
    range.lower !== null && range.upper !== null && (tau2 < range.lower || tau2 > range.upper)
      ? ` The model's treatment-by-trial variance implies a between-site variance of ${tau2.toPrecision(3)} for this contrast, outside the interval ${range.lower.toPrecision(3)} to ${range.upper.toPrecision(3)} from the trials' own estimates: this contrast varies across sites ${tau2 < range.lower ? 'more' : 'less'} than the common treatment-by-trial term allows, so the plug-in interval is ${tau2 < range.lower ? 'too narrow' : 'too wide'}; the bootstrap follows the trials' own estimates.`
      : '';
  const b = bootstrapPrediction(
    y,
    v,
    {
      confidence: options.confidence,
      threshold: options.threshold,
      draws: options.draws,
      seed: options.seed,
      signal: options.signal,
      externalMean: { estimate: contrast.estimate, se: contrast.se, df: contrast.df, tau2 },
    },
  );
  return {
    ...base,
    method: 'bootstrap-tau2',
    tau2,
    lower: b.lower,
    upper: b.upper,
    probPositive: b.probPositive,
    probAboveThreshold: b.probAboveThreshold,
    trialsUsed: own.length,
    plugInT,
    draws: b.draws,
    seed: b.seed,
    note: `bootstrap-tau2: between-site variance of the contrast drawn from the confidence distribution of the generalised Q over ${own.length} trials' own estimates; mean drawn from t(${Number(contrast.df.toPrecision(4))}) around the one-stage estimate; ${b.draws} draws, seed ${b.seed}.${misfit}`,
  };
}
