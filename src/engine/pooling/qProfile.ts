// Q-profile confidence interval for tau² (Viechtbauer 2007, Stat Med 26:37-52): the set of
// tau² whose generalised Q, sum (y - X b(tau²))² / (v + tau²), lies between the chi-square
// quantiles on k - p df. The generalised Q decreases in tau², so each end is one bracketed root.
import { Matrix } from '../linalg/matrix.js';
import { chisqQuantile } from '../stats/distributions.js';
import { weightedFit } from './weightedFit.js';
import { decreasingRootFromZero } from './rootFinding.js';

export interface Tau2Interval {
  lower: number | null;
  upper: number | null;
  note: string | null;
}

export function qProfileInterval(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, confidence: number, start: number): Tau2Interval {
  const fe = weightedFit(y, v, x, 0);
  const df = x.rows - fe.rank;
  if (df < 1) return { lower: null, upper: null, note: 'Q-profile interval for tau² needs at least one residual df (k > number of coefficients).' };
  const alpha = 1 - confidence;
  const qHigh = chisqQuantile(1 - alpha / 2, df);
  const qLow = chisqQuantile(alpha / 2, df);
  const generalisedQ = (t: number) => weightedFit(y, v, x, t).weightedRss;
  const q0 = fe.weightedRss;
  const notes: string[] = [];
  let lower: number | null;
  let upper: number | null;
  if (q0 <= qHigh) {
    lower = 0;
    notes.push('lower limit truncated at zero (Q at tau² = 0 is below the upper chi-square quantile)');
  } else {
    lower = decreasingRootFromZero((t) => generalisedQ(t) - qHigh, Math.max(start, 1e-8));
  }
  if (q0 <= qLow) {
    upper = 0;
    notes.push('upper limit also zero (Q at tau² = 0 is below the lower chi-square quantile)');
  } else {
    upper = decreasingRootFromZero((t) => generalisedQ(t) - qLow, Math.max(start, 1e-8));
  }
  return { lower, upper, note: notes.length ? `Q-profile: ${notes.join('; ')}.` : null };
}
