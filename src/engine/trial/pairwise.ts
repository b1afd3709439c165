// All pairwise differences of the estimable adjusted means with a multiplicity adjustment.
// Tukey–Kramer: p from the studentised range with k means at q = sqrt(2) |t|, intervals
// diff ± qtukey(conf, k, df) / sqrt(2) · SE (each pair's own SE, so unequal replication and
// missing plots are handled as Kramer 1956 proposed). Holm: step-down adjusted p; Holm has no
// matching intervals, so the intervals are Bonferroni's (simultaneous, slightly conservative).
import { tQuantile, tTwoSidedP } from '../stats/distributions.js';
import type { LinearFit } from './linearFit.js';
import { estimate, unscaledCrossKept } from './linearFit.js';
import type { MeanVectors } from './adjustedMeans.js';
import type { PairwiseComparison, PairwiseResult } from './types.js';
import { ptukeyUpper, qtukey } from './studentizedRange.js';
import { holmAdjust } from './holm.js';
import { ratioRecord } from './contrastEstimates.js';
import { num } from '../jsonSafe.js';

interface RawPair {
  readonly first: string;
  readonly second: string;
  readonly difference: number;
  readonly se: number;
}

// The difference vectors depend on the mean vectors alone (kept per layout): kept with them.
const pairMemo = new WeakMap<MeanVectors, { first: string; second: string; l: Float64Array }[]>();

function pairVectors(mv: MeanVectors): { first: string; second: string; l: Float64Array }[] {
  let pairs = pairMemo.get(mv);
  if (!pairs) {
    pairs = [];
    const idx = mv.codes.map((_, i) => i).filter((i) => mv.estimable[i]);
    for (let a = 0; a < idx.length; a++)
      for (let b = a + 1; b < idx.length; b++) {
        const va = mv.vectors[idx[a]] as Float64Array;
        const vb = mv.vectors[idx[b]] as Float64Array;
        pairs.push({ first: mv.codes[idx[a]], second: mv.codes[idx[b]], l: va.map((v, j) => v - vb[j]) });
      }
    pairMemo.set(mv, pairs);
  }
  return pairs;
}

/** Differences first minus second for every pair of estimable means, in protocol order. */
export function pairDifferences(mv: MeanVectors, fit: LinearFit): RawPair[] {
  return pairVectors(mv).map(({ first, second, l }) => ({ first, second, difference: estimate(fit, l), se: Math.sqrt(fit.sigma2 * unscaledCrossKept(fit, l, l)) }));
}

export function pairwiseComparisons(method: 'tukey' | 'holm', pairs: readonly RawPair[], means: number, df: number, confidence: number, logScale: boolean): PairwiseResult {
  const t = pairs.map((p) => p.difference / p.se);
  const raw = t.map((v) => (df > 0 ? tTwoSidedP(v, df) : NaN));
  let adjusted: number[];
  let critical: number;
  let note: string;
  if (method === 'tukey') {
    adjusted = t.map((v) => (df >= 2 && means >= 2 ? ptukeyUpper(Math.SQRT2 * Math.abs(v), means, df) : NaN));
    critical = df >= 2 && means >= 2 ? qtukey(confidence, means, df) / Math.SQRT2 : NaN;
    note = `Tukey–Kramer over ${means} adjusted means: studentised range on ${df} df, each pair with its own standard error`;
  } else {
    adjusted = holmAdjust(raw);
    critical = df > 0 && pairs.length > 0 ? tQuantile(1 - (1 - confidence) / (2 * pairs.length), df) : NaN;
    note = `Holm step-down adjusted p over ${pairs.length} comparisons; intervals are Bonferroni simultaneous intervals (Holm has no matching intervals)`;
  }
  const comparisons: PairwiseComparison[] = pairs.map((p, i) => {
    const lower = p.difference - critical * p.se;
    const upper = p.difference + critical * p.se;
    return {
      first: p.first,
      second: p.second,
      difference: num(p.difference),
      se: num(p.se),
      t: num(t[i]),
      pUnadjusted: num(raw[i]),
      pAdjusted: num(adjusted[i]),
      lower: num(lower),
      upper: num(upper),
      ratio: logScale ? ratioRecord(p.difference, lower, upper, `ratio of geometric means ${p.first} / ${p.second}`) : null,
    };
  });
  return { method, df, confidence, criticalValue: num(critical), note, comparisons };
}
