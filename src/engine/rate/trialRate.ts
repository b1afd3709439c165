// One trial's part of the rate-response analysis: its plots, its curve (or the reason there
// is none), its own economic optimum, and the warnings a reader needs about it.
import type { TrialInput } from '../types.js';
import { cappedOptimum, netReturn, yieldGain, type Curve } from './curves.js';
import { num, numRecord } from '../jsonSafe.js';
import { chooseTrialModel } from './modelChoice.js';
import { trialRateData } from './rateData.js';
import type { OptimumFlag, RateResponseOptions, TrialRateResult } from './types.js';

export interface PooledTrial {
  readonly curve: Curve;
  readonly range: [number, number];
}

export interface TrialRateEntry {
  readonly result: TrialRateResult;
  /** Present when the trial's curve converged and enters the pooled results. */
  readonly pooled: PooledTrial | null;
  readonly warnings: string[];
}

export function analyseTrialRate(t: TrialInput, rates: Map<string, number>, options: RateResponseOptions): TrialRateEntry {
  const r = options.priceRatio;
  const warnings: string[] = [];
  const d = trialRateData(t, rates);
  const n = d.y.length;
  if (n === 0) {
    warnings.push(`Trial ${t.trial}: no usable plots of the chosen treatments; left out.`);
    return { result: emptyTrial(t.trial, 'no usable plots of the chosen treatments'), pooled: null, warnings };
  }
  const range: [number, number] = [d.distinctRates[0], d.distinctRates[d.distinctRates.length - 1]];
  if (!d.hasZeroRate) warnings.push(`Trial ${t.trial}: no plots at rate 0; its yield gain is measured from the curve extrapolated to rate 0.`);
  const { chosen, table, fallback } = chooseTrialModel(d, options.model);
  if (fallback && chosen.converged) warnings.push(`Trial ${t.trial}: ${fallback}.`);
  const curve = chosen.curve;
  const flags: OptimumFlag[] = [];
  let opt: ReturnType<typeof cappedOptimum> | null = null;
  let pooled: PooledTrial | null = null;
  if (!curve) flags.push('no-curve');
  else if (!chosen.converged) flags.push('not-converged');
  else {
    opt = cappedOptimum(curve, r, range[0], range[1]);
    flags.push(...opt.flags);
    pooled = { curve, range };
  }
  if (!chosen.converged) warnings.push(`Trial ${t.trial}: ${chosen.model} fit did not converge (${chosen.note ?? 'no detail'}); left out of the pooled results.`);
  const df = n - (chosen.parameters - 1);
  const result: TrialRateResult = {
    trial: t.trial,
    model: curve ? chosen.model : null,
    params: curve ? numRecord(curve.params) : {},
    standardErrors: curve ? numRecord(chosen.standardErrors) : {},
    optimum: num(opt?.optimum),
    unconstrainedOptimum: num(opt?.unconstrained),
    yieldGainAtOptimum: opt && curve ? num(yieldGain(curve, opt.optimum)) : null,
    netReturnAtOptimum: opt && curve ? num(netReturn(curve, opt.optimum, r)) : null,
    converged: chosen.converged,
    convergence: { method: chosen.method, evaluations: chosen.evaluations, note: chosen.note },
    flags,
    testedRange: [num(range[0]), num(range[1])],
    plots: n,
    rss: curve ? num(chosen.rss) : null,
    residualSd: curve && df > 0 ? num(Math.sqrt(chosen.rss / df)) : null,
    ...(table ? { aicTable: table } : {}),
  };
  return { result, pooled, warnings };
}

function emptyTrial(trial: string, note: string): TrialRateResult {
  return {
    trial,
    model: null,
    params: {},
    standardErrors: {},
    optimum: null,
    unconstrainedOptimum: null,
    yieldGainAtOptimum: null,
    netReturnAtOptimum: null,
    converged: false,
    convergence: { method: 'none', evaluations: 0, note },
    flags: ['no-curve'],
    testedRange: [null, null],
    plots: 0,
    rss: null,
    residualSd: null,
  };
}
