// Chi-square quantiles for a small tail probability on either side, fast enough to call a few
// hundred times per pool (the general quantile routine costs about a tenth of a millisecond per
// call). Newton steps on the tail probability itself (so a tail of 1e-7 keeps its relative
// precision), started from the Wilson–Hilferty approximation (common practice) and kept inside a
// bracket; the density's log-gamma constant is computed once per df.
import gammainc from '@stdlib/math-base-special-gammainc';
import { chisqLowerLargeDf, chisqUpperLargeDf } from './chisqLargeDf.js';
import { normalQuantile } from './distributions.js';

const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);

/** log Gamma(a) for a > 0: shifted to a >= 50, then the Stirling series. */
export function logGamma(a: number): number {
  let shift = 0;
  while (a < 50) {
    shift += Math.log(a);
    a += 1;
  }
  const a2 = a * a;
  const series = (1 / 12 - (1 / 360 - (1 / 1260 - 1 / (1680 * a2)) / a2) / a2) / a;
  return (a - 0.5) * Math.log(a) - a + HALF_LOG_2PI + series - shift;
}

export interface ChisqTailQuantile {
  /** x with P(X > x) = p (upper tail), p in (0, 1). */
  upper(p: number): number;
  /** x with P(X <= x) = p (lower tail), p in (0, 1). */
  lower(p: number): number;
}

export function chisqTailQuantile(df: number): ChisqTailQuantile {
  const a = df / 2;
  const logNorm = a * Math.LN2 + logGamma(a);
  const upperTail = (x: number) => (df > 1000 ? chisqUpperLargeDf(x, df) : gammainc(x / 2, a, true, true));
  const lowerTail = (x: number) => (df > 1000 ? chisqLowerLargeDf(x, df) : gammainc(x / 2, a, true, false));
  const density = (x: number) => Math.exp((a - 1) * Math.log(x) - x / 2 - logNorm);
  // Start: Wilson–Hilferty, or for a small lower tail the leading term of the series,
  // P(X <= x) ~ (x/2)^a / Gamma(a + 1), whichever applies.
  const startAt = (lowerP: number) => {
    const h = 2 / (9 * df);
    const cube = 1 - h + normalQuantile(lowerP) * Math.sqrt(h);
    const series = 2 * Math.exp((Math.log(lowerP) + logGamma(a + 1)) / a);
    return cube > 0.5 ? df * cube * cube * cube : Math.min(series, df);
  };
  // Solve tail(x) = p by Newton steps in t = log x (d tail / dt = sign * density(x) * x), kept
  // inside a bracket; `sign` is -1 for the upper tail (decreasing in x), +1 for the lower.
  const solve = (p: number, tail: (x: number) => number, sign: 1 | -1, start: number): number => {
    let lo = -Infinity;
    let hi = Infinity;
    let t = Math.log(start);
    for (let i = 0; i < 200; i++) {
      const x = Math.exp(t);
      const f = sign * (tail(x) - p);
      if (f === 0) return x;
      if (f > 0) hi = t;
      else lo = t;
      let next = t - f / (density(x) * x);
      if (!(next > lo && next < hi)) next = Number.isFinite(lo) && Number.isFinite(hi) ? 0.5 * (lo + hi) : Number.isFinite(hi) ? hi - 2 : lo + 2;
      if (Math.abs(next - t) <= 1e-14) return Math.exp(next);
      t = next;
    }
    return Math.exp(t);
  };
  return {
    upper: (p) => solve(p, upperTail, -1, startAt(1 - p)),
    lower: (p) => solve(p, lowerTail, 1, startAt(p)),
  };
}
