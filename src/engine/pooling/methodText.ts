// Plain statements of what each number assumes, carried with every pooled result.
import type { CorePool } from './poolCore.js';
import type { PoolingOptions } from './types.js';

const TAU2_NAMES: Record<PoolingOptions['tau2'], string> = {
  reml: 'REML (restricted likelihood, Patterson–Thompson): Fisher scoring with step-halving, then the root of the score by bracketing (Brent); tau² >= 0',
  ml: 'maximum likelihood: Fisher scoring with step-halving, then the root of the score by bracketing (Brent); tau² >= 0',
  dl: 'DerSimonian–Laird method of moments, truncated at zero',
  pm: 'Paule–Mandel (generalised Q equal to k - 1, bracketed root), truncated at zero',
  fixed: 'fixed-effect (common-effect) model: tau² assumed zero',
};

export function tau2Text(options: PoolingOptions, core: CorePool): string {
  let s = TAU2_NAMES[options.tau2];
  if (options.tau2 === 'reml' || options.tau2 === 'ml') s += `; ${core.tau2Converged ? 'converged' : 'NOT converged'} after ${core.iterations} scoring iteration(s)`;
  if (core.atBoundary && options.tau2 !== 'fixed') s += '; estimate on the zero boundary (no between-trial variance detected; this is a result, not a failure)';
  return s + '.';
}

export function intervalText(options: PoolingOptions, core: CorePool): string {
  const level = `${Math.round(options.confidence * 1000) / 10}%`;
  if (core.k === 1) return `${level} interval of the single trial.`;
  if (options.interval === 'wald' || core.df === null) return `${level} Wald interval: mean ± normal quantile × SE, SE = 1/sqrt(sum of weights).`;
  const floor = options.hksjFloor ? ' The scale factor is floored at 1 (max(1, q)), so the interval is never narrower than Wald.' : '';
  return `${level} Hartung–Knapp–Sidik–Jonkman interval: variance of the mean scaled by q = sum w (y - mean)² / (k - 1) = ${fmt(core.hksjScale)}, t on ${core.df} df.${floor}`;
}

export const PREDICTION_TEXT =
  'New-site prediction interval: mean ± t(k - 2) × sqrt(SE² + tau²) (Higgins, Thompson & Spiegelhalter 2009), with the model-based SE of the mean. Assumes the true effects of sites are normally distributed around the mean and that a new site is exchangeable with the sites pooled (same population of sites, seasons and management).';

export const PROBABILITY_TEXT =
  'Probabilities that the true effect at a new site is above 0 and above the threshold, from the same predictive t distribution (k - 2 df, centre = mean, scale = sqrt(SE² + tau²)). Same assumptions as the prediction interval; they describe true site effects, not the noisier estimate a single new trial would report.';

function fmt(x: number | null): string {
  return x === null ? 'n/a' : x.toPrecision(4);
}
