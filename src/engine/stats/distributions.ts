// Probability distributions used across the engine. Tail probabilities go through the
// regularised incomplete beta/gamma functions directly so that tiny p-values keep their
// relative precision (1 - cdf would lose it).
import betainc from '@stdlib/math-base-special-betainc';
import gammainc from '@stdlib/math-base-special-gammainc';
import tQuantileStd from '@stdlib/stats-base-dists-t-quantile';
import fQuantileStd from '@stdlib/stats-base-dists-f-quantile';
import chisqQuantileStd from '@stdlib/stats-base-dists-chisquare-quantile';
import normalCdfStd from '@stdlib/stats-base-dists-normal-cdf';
import normalQuantileStd from '@stdlib/stats-base-dists-normal-quantile';
import { chisqQuantileLargeDf, chisqUpperLargeDf } from './chisqLargeDf.js';

/** Above this many df the chi-square goes through chisqLargeDf.ts (the general routine drifts above ~2,000 df). */
const LARGE_DF = 1000;

/** Two-sided p-value of a t statistic on `df` degrees of freedom. */
export function tTwoSidedP(t: number, df: number): number {
  if (!Number.isFinite(t)) return Number.isNaN(t) ? NaN : 0;
  if (!(df > 0)) return NaN;
  if (!Number.isFinite(df)) return 2 * normalUpper(Math.abs(t));
  return betainc(df / (df + t * t), df / 2, 0.5);
}

/** P(T > t) for Student's t. */
export function tUpper(t: number, df: number): number {
  const half = 0.5 * tTwoSidedP(t, df);
  return t >= 0 ? half : 1 - half;
}

/** P(T <= t) for Student's t. */
export function tCdf(t: number, df: number): number {
  return 1 - tUpper(t, df);
}

/** Quantile of Student's t; infinite df gives the normal quantile. */
export function tQuantile(p: number, df: number): number {
  if (!Number.isFinite(df)) return normalQuantileStd(p, 0, 1);
  // Thousands of trials ask for the same few quantiles (one confidence level, a handful of df);
  // each costs an incomplete-beta inversion, so the values already found are kept.
  // Keyed by the numbers themselves (no key string to build on every call).
  let byDf = quantileMemo.get(p);
  if (byDf === undefined) {
    if (quantileMemo.size >= MEMO_LIMIT) quantileMemo.clear();
    quantileMemo.set(p, (byDf = new Map()));
  }
  let q = byDf.get(df);
  if (q === undefined) {
    q = tQuantileStd(p, df);
    if (byDf.size >= MEMO_LIMIT) byDf.clear();
    byDf.set(df, q);
  }
  return q;
}

const MEMO_LIMIT = 4096;
const quantileMemo = new Map<number, Map<number, number>>();

/** Upper-tail probability P(F > f) for the F distribution. */
export function fUpper(f: number, df1: number, df2: number): number {
  if (!(df1 > 0) || !(df2 > 0) || Number.isNaN(f)) return NaN;
  if (f <= 0) return 1;
  if (!Number.isFinite(f)) return 0;
  // P(F > f) = I_{df2/(df2+df1 f)}(df2/2, df1/2)
  return betainc(df2 / (df2 + df1 * f), df2 / 2, df1 / 2);
}

export function fQuantile(p: number, df1: number, df2: number): number {
  return fQuantileStd(p, df1, df2);
}

/** Upper-tail probability P(X > x) for chi-square with `df` degrees of freedom. */
export function chisqUpper(x: number, df: number): number {
  if (!(df > 0) || Number.isNaN(x)) return NaN;
  if (x <= 0) return 1;
  if (df > LARGE_DF) return chisqUpperLargeDf(x, df);
  return gammainc(x / 2, df / 2, true, true);
}

export function chisqQuantile(p: number, df: number): number {
  if (df > LARGE_DF) return chisqQuantileLargeDf(p, df, normalQuantile);
  return chisqQuantileStd(p, df);
}

export function normalCdf(z: number): number {
  return normalCdfStd(z, 0, 1);
}

/** P(Z > z) computed without cancellation for large z. */
export function normalUpper(z: number): number {
  return 0.5 * gammaincUpperHalf(z);
}

function gammaincUpperHalf(z: number): number {
  // erfc(z / sqrt 2) = Q(1/2, z^2/2) for z >= 0.
  if (z >= 0) return gammainc((z * z) / 2, 0.5, true, true);
  return 2 - gammainc((z * z) / 2, 0.5, true, true);
}

export function normalQuantile(p: number): number {
  return normalQuantileStd(p, 0, 1);
}
