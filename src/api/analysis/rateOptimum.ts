// The economic optimum at a new price ratio without refitting: the trials' fitted curves (as the
// rate-response result reports them) go through the engine's own pooled-optimum search, so the
// screens' price control shows the engine's numbers, not a re-implementation's.
import { cappedOptimum, yieldGain, type Curve } from '../../engine/rate/curves.js';
import { gridRates, meanYieldGain, pooledOptimum } from '../../engine/rate/pooledOptimum.js';
import type { OptimumFlag, RateModel } from '../../engine/rate/types.js';
import { ManyfieldError } from '../result.js';

export interface RateCurveInput {
  readonly trial: string;
  readonly model: RateModel | null;
  readonly params: Readonly<Record<string, number | null>>;
  readonly testedRange: readonly [number | null, number | null];
  readonly converged: boolean;
}

export interface RateOptimumArgs {
  readonly trials: readonly RateCurveInput[];
  readonly priceRatio: number;
  /** Net return (yield units) within which a rate counts as profitable, as the spec's profitableWithin. */
  readonly within: number;
  /** Points of the drawn curves over the common tested range. */
  readonly points: number;
}

export interface RateCurvePoint {
  readonly rate: number;
  /** Mean yield gain over the trials' curves (the pooled curve). */
  readonly gain: number;
  /** Mean net return in yield units: gain - priceRatio × rate. */
  readonly net: number;
}

export interface RateOptimumResult {
  readonly priceRatio: number;
  readonly optimum: number | null;
  readonly netReturn: number | null;
  readonly yieldGain: number | null;
  readonly profitableLower: number | null;
  readonly profitableUpper: number | null;
  readonly flags: readonly OptimumFlag[];
  readonly range: readonly [number, number] | null;
  readonly trialsUsed: number;
  /** The pooled curve over the common range. */
  readonly curve: readonly RateCurvePoint[];
  /** Each trial's own optimum at this price ratio, held inside its tested range. */
  readonly trialOptima: readonly { readonly trial: string; readonly optimum: number }[];
  /** Each trial's yield-gain curve on the same rates (for drawing the per-trial curves). */
  readonly trialCurves: readonly { readonly trial: string; readonly gains: readonly number[] }[];
}

interface UsableCurve {
  readonly trial: string;
  readonly curve: Curve;
  readonly range: [number, number];
}

/** The trials the engine pools: a converged curve with every parameter and a tested range. */
function usable(t: RateCurveInput): UsableCurve | null {
  const [lo, hi] = t.testedRange;
  if (!t.converged || t.model === null || lo === null || hi === null) return null;
  const params: Record<string, number> = {};
  for (const [k, v] of Object.entries(t.params)) {
    if (v === null || !Number.isFinite(v)) return null;
    params[k] = v;
  }
  return { trial: t.trial, curve: { model: t.model, params }, range: [lo, hi] };
}

export function rateOptimumAt(args: RateOptimumArgs): RateOptimumResult {
  if (!(args.priceRatio > 0)) throw new ManyfieldError('invalid-argument', `the price ratio must be above 0 (${args.priceRatio} given)`);
  const used = args.trials.map(usable).filter((u): u is UsableCurve => u !== null);
  const empty: RateOptimumResult = { priceRatio: args.priceRatio, optimum: null, netReturn: null, yieldGain: null, profitableLower: null, profitableUpper: null, flags: ['no-curve'], range: null, trialsUsed: used.length, curve: [], trialOptima: [], trialCurves: [] };
  if (used.length === 0) return empty;
  const lo = Math.max(...used.map((u) => u.range[0]));
  const hi = Math.min(...used.map((u) => u.range[1]));
  if (hi < lo) return empty;
  const curves = used.map((u) => u.curve);
  const point = pooledOptimum(curves, args.priceRatio, lo, hi, args.within);
  const rates = Array.from(gridRates(lo, hi, Math.max(2, args.points)));
  return {
    priceRatio: args.priceRatio,
    optimum: point.optimum,
    netReturn: point.netReturn,
    yieldGain: point.yieldGain,
    profitableLower: point.profitableLower,
    profitableUpper: point.profitableUpper,
    flags: point.flags,
    range: [lo, hi],
    trialsUsed: used.length,
    curve: rates.map((x) => {
      const gain = meanYieldGain(curves, x);
      return { rate: x, gain, net: gain - args.priceRatio * x };
    }),
    trialOptima: used.map((u) => ({ trial: u.trial, optimum: cappedOptimum(u.curve, args.priceRatio, u.range[0], u.range[1]).optimum })),
    trialCurves: used.map((u) => ({ trial: u.trial, gains: rates.map((x) => yieldGain(u.curve, x)) })),
  };
}
