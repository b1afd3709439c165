// One recommended economic optimum rate out of the two the analysis computes — the optimum of
// the pooled curve (the mean of the trials' own curves) and the optimum of the mixed-model
// population curve — with the reason for the choice, and the other kept as a check. Nothing
// is computed anew: this picks, compares and marks interval ends held at a tested limit.
import type { MixedRateResult } from './mixed/types.js';
import type { Num, OptimumFlag, PooledRateResult } from './types.js';

export type RecommendationSource = 'pooled-curve' | 'mixed-model-curve';

export interface RecommendedRate {
  readonly source: RecommendationSource;
  readonly rate: Num;
  readonly lower: Num;
  readonly upper: Num;
  readonly intervalMethod: string;
  /**
   * An interval end that sits on the lowest or highest rate tested in every trial: the
   * optimum is never sought outside the tested rates, so the true limit may lie beyond it.
   */
  readonly lowerAtTestedLimit: boolean;
  readonly upperAtTestedLimit: boolean;
  readonly flags: readonly OptimumFlag[];
  /** Rates tested in every trial used: where the optimum is sought. */
  readonly testedRange: readonly [Num, Num];
}

export interface RateRecommendation {
  readonly recommended: RecommendedRate;
  readonly reason: string;
  /** The other optimum, shown to confirm the recommendation; null when it was not computed. */
  readonly check: (RecommendedRate & { readonly agrees: boolean | null; readonly comparison: string }) | null;
  /** Rates whose mean net return is within `profitableWithin` (yield units) of the best, on the pooled curve. */
  readonly nearBest: { readonly lower: Num; readonly upper: Num; readonly within: number } | null;
}

/** Relative tolerance for "an interval end equals a tested limit" (the bootstrap's ends are tested rates exactly). */
const AT_LIMIT_TOLERANCE = 1e-9;

function atLimit(x: Num, limit: Num): boolean {
  return x !== null && limit !== null && Math.abs(x - limit) <= AT_LIMIT_TOLERANCE * Math.max(1, Math.abs(limit));
}

/** Both curves report an optimum the same way; only the field names of their results differ. */
function recommended(source: RecommendedRate['source'], o: { rate: number | null; lower: number | null; upper: number | null; method: RecommendedRate['intervalMethod']; range: RecommendedRate['testedRange']; flags: RecommendedRate['flags'] }): RecommendedRate {
  return {
    source,
    rate: o.rate,
    lower: o.lower,
    upper: o.upper,
    intervalMethod: o.method,
    lowerAtTestedLimit: atLimit(o.lower, o.range[0]),
    upperAtTestedLimit: atLimit(o.upper, o.range[1]),
    flags: o.flags,
    testedRange: o.range,
  };
}

function fromPooled(p: PooledRateResult): RecommendedRate {
  return recommended('pooled-curve', { rate: p.optimum, lower: p.optimumLower, upper: p.optimumUpper, method: p.method, range: p.range, flags: p.flags });
}

function fromMixed(m: MixedRateResult): RecommendedRate {
  const o = m.optimum;
  return recommended('mixed-model-curve', { rate: o.optimum, lower: o.lower, upper: o.upper, method: o.method, range: o.range, flags: o.flags });
}

function usable(r: RecommendedRate): boolean {
  return r.rate !== null && !r.flags.includes('not-converged') && !r.flags.includes('no-curve');
}

const POOLED_REASON =
  'the pooled curve is the mean of the trials\' own fitted curves, so its optimum maximises the average net return over the site-years tested, each trial counting once, with the curve form the spec chose; its interval reflects how much that average moves from one set of trials to another';
const MIXED_REASON =
  'the pooled curve gave no usable optimum, so the recommendation is the optimum of the mixed-model population curve (random trial deviations of the quadratic\'s coefficients, fitted to every plot by REML)';

export function recommendRate(pooled: PooledRateResult, mixed: MixedRateResult | null | undefined, profitableWithin: number): RateRecommendation {
  const a = fromPooled(pooled);
  const b = mixed && mixed.convergence.converged ? fromMixed(mixed) : null;
  const pooledFirst = usable(a) || b === null || !usable(b);
  const recommended = pooledFirst ? a : b;
  const other = pooledFirst ? b : a;
  const nearBest = pooled.profitableLower === null ? null : { lower: pooled.profitableLower, upper: pooled.profitableUpper, within: profitableWithin };
  return {
    recommended,
    reason: pooledFirst ? POOLED_REASON : MIXED_REASON,
    check: other === null ? null : { ...other, ...compare(recommended, other) },
    nearBest,
  };
}

/** The check agrees when its rate lies inside the recommended rate's interval. */
function compare(main: RecommendedRate, check: RecommendedRate): { agrees: boolean | null; comparison: string } {
  if (main.rate === null || check.rate === null) return { agrees: null, comparison: 'no comparison: one of the two optima is missing' };
  if (main.lower === null || main.upper === null) return { agrees: null, comparison: 'no comparison: the recommended rate has no interval' };
  const agrees = check.rate >= main.lower && check.rate <= main.upper;
  return {
    agrees,
    comparison: agrees
      ? 'the check lies inside the recommended rate\'s interval: the two ways of pooling agree'
      : 'the check lies outside the recommended rate\'s interval: the trials disagree in a way the two ways of pooling weigh differently (precise trials count more in the mixed model); look at the trials before recommending',
  };
}
