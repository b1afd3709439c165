// Response to rate across a network of trials and the economic optimum rate.
// Stages: per-trial curves (with the trial's block offsets) -> per-trial optima -> pooled
// optimum of the mean net return -> its uncertainty (delta method, bootstrap over trials)
// -> price-ratio sensitivity; for quadratic (or 'best') curves also a mixed-model quadratic
// with random trial deviations of the coefficients (mixed/), whose failure is a warning.
import type { NetworkInput } from '../types.js';
import { cappedOptimum, type Curve } from './curves.js';
import { RateResponseInputError } from './errors.js';
import { num } from '../jsonSafe.js';
import { pooledOptimum, type PooledPoint } from './pooledOptimum.js';
import { quadraticDeltaInterval } from './deltaMethod.js';
import { bootstrapOptimum } from './bootstrap.js';
import { quantileType7 } from './quantile.js';
import { appliedRates, treatmentRates } from './rateData.js';
import { analyseTrialRate, type PooledTrial } from './trialRate.js';
import { analyzeMixedQuadratic } from './mixed/analyzeMixedQuadratic.js';
import type { MixedRateResult } from './mixed/types.js';
import { unitNote } from './unitNote.js';
import { recommendRate } from './recommendation.js';
import {
  CURVE_FORMS,
  RATE_CAUTIONS,
  RATE_MODELS,
  type PooledRateResult,
  type RateResponseHooks,
  type RateResponseOptions,
  type RateResponseResult,
  type SensitivityRow,
  type SiteOptima,
  type TrialRateResult,
} from './types.js';

export { formatRateResponseText } from './formatRateResponseText.js';
export type { RateResponseOptions, RateResponseResult } from './types.js';

export const SENSITIVITY_MULTIPLIERS: readonly number[] = [0.5, 0.75, 1, 1.25, 1.5, 2];
export const SITE_QUANTILES: readonly number[] = [0.1, 0.25, 0.5, 0.75, 0.9];

export function analyzeRateResponse(network: NetworkInput, options: RateResponseOptions, hooks?: RateResponseHooks): RateResponseResult {
  checkOptions(options);
  const signal = hooks?.signal;
  const progress = (stage: string, fraction: number) => hooks?.onProgress?.({ stage, fraction });
  const r = options.priceRatio;
  const warnings: string[] = [];
  const rates = treatmentRates(network, options.factor, options.at);
  const used = [...new Set(rates.values())];
  if (used.length < 2) throw new RateResponseInputError(`only ${used.length} distinct rate(s) among the treatments chosen for "${options.factor}"${options.at ? ` at ${JSON.stringify(options.at)}` : ''}; a curve needs at least 2 (3 for curved models)`);
  if (!used.includes(0)) warnings.push('No treatment at rate 0 (no control) among those chosen: yield gains are measured from each curve extrapolated to rate 0.');

  const trials: TrialRateResult[] = [];
  const pooled: PooledTrial[] = [];
  network.trials.forEach((t, i) => {
    signal?.throwIfAborted();
    const entry = analyseTrialRate(t, appliedRates(t, rates, options.factor), options);
    trials.push(entry.result);
    warnings.push(...entry.warnings);
    if (entry.pooled) pooled.push(entry.pooled);
    progress('fitting trials', (i + 1) / network.trials.length);
  });

  const curves = pooled.map((p) => p.curve);
  const lo = Math.max(...pooled.map((p) => p.range[0]));
  const hi = Math.min(...pooled.map((p) => p.range[1]));
  if (pooled.length > 0 && pooled.some((p) => p.range[0] !== lo || p.range[1] !== hi))
    warnings.push(`Trials tested different rate ranges; the pooled optimum is sought only over ${lo}–${hi}, the range tested in every trial used.`);
  if (pooled.length === 0) warnings.push('No trial has a converged curve: no pooled optimum.');
  else if (hi < lo) warnings.push('The trials share no common range of tested rates: no pooled optimum.');
  else if (pooled.length < 5) warnings.push(`Only ${pooled.length} trial(s) in the pooled optimum: its interval is rough.`);
  if (options.model === 'best' && new Set(curves.map((c) => c.model)).size > 1) warnings.push('Trials use different curve models (chosen per trial by AICc); the pooled curve averages them.');
  const straight = trials.filter((t) => t.model === 'linear' && t.optimum !== null).length;
  if (options.model === 'best' && straight > 0)
    warnings.push(`${straight} trial(s) are best described by a straight line over the tested rates: a line has no optimum inside the range, so their optimum sits at an end of it and pulls the pooled optimum there. Compare with a curved model before recommending a rate.`);

  const point = pooled.length > 0 && hi >= lo ? pooledOptimum(curves, r, lo, hi, options.profitableWithin) : null;
  const pooledResult = buildPooled(point, curves, pooled, options, lo, hi, progress, signal, warnings);
  const siteOptima = summariseSiteOptima(trials);
  const sensitivity: SensitivityRow[] = SENSITIVITY_MULTIPLIERS.map((m) => {
    signal?.throwIfAborted();
    const ratio = r * m;
    const p = pooled.length > 0 && hi >= lo ? pooledOptimum(curves, ratio, lo, hi, options.profitableWithin) : null;
    const site = pooled.map((q) => cappedOptimum(q.curve, ratio, q.range[0], q.range[1]));
    return {
      multiplier: m,
      priceRatio: ratio,
      optimum: num(p?.optimum),
      profitableLower: num(p?.profitableLower),
      profitableUpper: num(p?.profitableUpper),
      netReturnAtOptimum: num(p?.netReturn),
      yieldGainAtOptimum: num(p?.yieldGain),
      shareNoInputPays: site.length > 0 ? site.filter((s) => s.flags.includes('no-input-pays')).length / site.length : null,
      flags: p?.flags ?? ['no-curve'],
    };
  });
  const siteAmounts = network.trials.some((t) => Object.values(t.appliedLevels ?? {}).some((l) => options.factor in l));
  if (siteAmounts) warnings.push(`Some treatments were applied at different ${options.factor} amounts in different trials: each trial's curve, and each trial's plots in the mixed-model curve, use the amounts applied there.`);
  const mixedModel = options.model === 'quadratic' || options.model === 'best' ? mixedQuadraticOrWarning(network, rates, options, warnings) : undefined;
  progress('done', 1);
  const factorInfo = network.factors.find((f) => f.name === options.factor);
  const rateUnit = factorInfo?.unit ?? null;
  const yieldUnit = network.unit ?? null;
  return {
    factor: options.factor,
    model: options.model,
    priceRatio: r,
    at: options.at ? { ...options.at } : null,
    rateUnit,
    yieldUnit,
    unitNote: unitNote(rateUnit, yieldUnit),
    curveForms: [...CURVE_FORMS],
    trials,
    pooled: pooledResult,
    siteOptima,
    sensitivity,
    cautions: [...RATE_CAUTIONS],
    warnings,
    ...(mixedModel !== undefined ? { mixedModel } : {}),
    recommendation: recommendRate(pooledResult, mixedModel, options.profitableWithin),
  };
}

function mixedQuadraticOrWarning(network: NetworkInput, rates: Map<string, number>, options: RateResponseOptions, warnings: string[]): MixedRateResult | null {
  try {
    const m = analyzeMixedQuadratic(network, rates, { priceRatio: options.priceRatio, confidence: options.confidence, factor: options.factor });
    if (!m.convergence.converged) warnings.push(`Mixed-model quadratic: ${m.convergence.note ?? 'did not converge'}; read its figures with care.`);
    return m;
  } catch (e) {
    warnings.push(`Mixed-model quadratic could not be fitted: ${e instanceof Error ? e.message : String(e)}.`);
    return null;
  }
}

function buildPooled(
  point: PooledPoint | null,
  curves: Curve[],
  pooled: PooledTrial[],
  options: RateResponseOptions,
  lo: number,
  hi: number,
  progress: (stage: string, fraction: number) => void,
  signal: AbortSignal | undefined,
  warnings: string[],
): PooledRateResult {
  const r = options.priceRatio;
  const interior = point !== null && point.flags.length === 0;
  const delta = point && interior ? quadraticDeltaInterval(curves, r, options.confidence) : null;
  let boot: ReturnType<typeof bootstrapOptimum> | null = null;
  if (point && options.bootstrap > 0) {
    if (pooled.length < 2) warnings.push('Bootstrap over trials needs at least 2 trials; skipped.');
    else
      boot = bootstrapOptimum(curves, pooled.map((p) => p.range), r, options.bootstrap, options.seed, options.confidence, (f) => progress('bootstrap', f), signal);
  }
  const pct = Math.round(options.confidence * 1000) / 10;
  let method: string;
  let lower: number | null = null;
  let upper: number | null = null;
  if (boot) {
    method = `bootstrap over trials, ${options.bootstrap} replicates, ${pct}% percentile interval`;
    lower = boot.lower;
    upper = boot.upper;
  } else if (delta) {
    method = `delta method on the mean quadratic coefficients (between-trial covariance), ${pct}% t interval on ${delta.df} df`;
    lower = delta.lower;
    upper = delta.upper;
  } else {
    method = point
      ? 'no interval: ask for bootstrap replicates (the delta method needs every trial quadratic, at least 3 trials and an optimum inside the tested range)'
      : 'no pooled optimum';
  }
  if (lower !== null && upper !== null && (lower < lo || upper > hi)) warnings.push('The optimum interval reaches beyond the tested rates; it is not capped, read its ends with care.');
  const prices = options.prices;
  return {
    optimum: num(point?.optimum),
    optimumLower: num(lower),
    optimumUpper: num(upper),
    profitableLower: num(point?.profitableLower),
    profitableUpper: num(point?.profitableUpper),
    netReturnAtOptimum: num(point?.netReturn),
    yieldGainAtOptimum: num(point?.yieldGain),
    method,
    flags: point?.flags ?? ['no-curve'],
    trialsUsed: curves.length,
    range: [num(point ? lo : NaN), num(point ? hi : NaN)],
    delta: delta ? { se: num(delta.se), df: delta.df, lower: num(delta.lower), upper: num(delta.upper) } : null,
    bootstrap: boot ? { replicates: options.bootstrap, lower: num(boot.lower), upper: num(boot.upper), se: num(boot.se), seed: options.seed } : null,
    money:
      prices && point
        ? { currency: prices.currency ?? null, netReturnAtOptimum: num(point.netReturn * prices.crop), inputCostAtOptimum: num(point.optimum * prices.input) }
        : null,
  };
}

function summariseSiteOptima(trials: TrialRateResult[]): SiteOptima {
  const optima = trials.filter((t) => t.optimum !== null).map((t) => t.optimum as number);
  const n = optima.length;
  return {
    n,
    quantiles: SITE_QUANTILES.map((p) => ({ p, value: num(quantileType7(optima, p)) })),
    min: n > 0 ? Math.min(...optima) : null,
    max: n > 0 ? Math.max(...optima) : null,
    shareNoInputPays: n > 0 ? trials.filter((t) => t.optimum !== null && t.flags.includes('no-input-pays')).length / n : null,
  };
}

function checkOptions(o: RateResponseOptions): void {
  if (!(Number.isFinite(o.priceRatio) && o.priceRatio > 0)) throw new RateResponseInputError(`priceRatio must be a positive number; got ${String(o.priceRatio)}`);
  if (!(Number.isFinite(o.profitableWithin) && o.profitableWithin >= 0)) throw new RateResponseInputError(`profitableWithin must be >= 0 (yield units); got ${String(o.profitableWithin)}`);
  if (!(Number.isInteger(o.bootstrap) && o.bootstrap >= 0)) throw new RateResponseInputError(`bootstrap must be a whole number >= 0; got ${String(o.bootstrap)}`);
  if (!(o.confidence > 0 && o.confidence < 1)) throw new RateResponseInputError(`confidence must lie strictly between 0 and 1; got ${String(o.confidence)}`);
  if (o.model !== 'best' && !RATE_MODELS.includes(o.model)) throw new RateResponseInputError(`unknown rate model "${String(o.model)}"`);
  if (o.prices) {
    const { input, crop } = o.prices;
    if (!(input > 0 && crop > 0)) throw new RateResponseInputError('prices.input and prices.crop must be positive');
    if (Math.abs(input / crop - o.priceRatio) > 1e-9 * o.priceRatio)
      throw new RateResponseInputError(`prices disagree with priceRatio: input/crop = ${input / crop}, priceRatio = ${o.priceRatio}`);
  }
}
