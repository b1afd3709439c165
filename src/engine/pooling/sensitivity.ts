// Sensitivity of the pooled mean: leave-one-trial-out pools, influence measures
// (Viechtbauer & Cheung 2010, Res Synth Methods 1:112-125: standardised and deleted
// residuals, Cook's distance, change in tau²) and cumulative pooling in order of year.
// Pools of many trials by ML / REML are solved from shared sums (interceptSeries.ts): the same
// root of the same score as a refit, at O(1) per pool instead of O(k); small pools, other
// tau² estimators and any pool the series cannot reach exactly are refitted directly.
import { poolCore, CorePool } from './poolCore.js';
import type { FitSettings } from './modelFit.js';
import { addTrialTerms, makeAnchor, seriesPool, SUM_LENGTH, type SeriesAnchor, type SeriesFit } from './interceptSeries.js';
import { normalQuantile, tQuantile } from '../stats/distributions.js';
import type { CumulativeRow, InfluenceRow, LeaveOneOutRow, PoolingItem, Sensitivity } from './types.js';

/** Pools of at least this many trials are solved from shared sums (below it a refit is as cheap). */
export const SERIES_FROM = 64;

/** `tau2Start`: a nearby pool's tau² (the full pool for leave-one-out, the previous row for cumulative). */
function poolItems(items: readonly PoolingItem[], settings: FitSettings, threshold: number, tau2Start?: number): CorePool {
  return poolCore(
    items.map((it) => it.estimate),
    items.map((it) => it.se * it.se),
    settings,
    threshold,
    items.length === 1 ? (items[0].df ?? null) : null,
    tau2Start,
  );
}

/** What a sensitivity row needs of a pool. */
interface PoolRow {
  estimate: number;
  se: number;
  seConventional: number;
  tau2: number | null;
  lower: number | null;
  upper: number | null;
}

/** The interval of a pool of k trials from its series fit, as fitModel gives it for the intercept. */
function rowFromSeries(fit: SeriesFit, k: number, settings: FitSettings, critical: (df: number | null) => number): PoolRow {
  let scale = 1;
  let df: number | null = null;
  if (settings.interval === 'hksj') {
    const q = fit.weightedRss / (k - 1);
    scale = settings.hksjFloor ? Math.max(1, q) : q;
    df = k - 1;
  }
  const se = Math.sqrt(scale) * fit.seConventional;
  const crit = critical(df);
  return { estimate: fit.estimate, se, seConventional: fit.seConventional, tau2: fit.tau2, lower: fit.estimate - crit * se, upper: fit.estimate + crit * se };
}

/** Quantiles of the interval, kept per df (leave-one-out rows share one; cumulative rows one each). */
function criticalValues(confidence: number): (df: number | null) => number {
  const cache = new Map<number | null, number>();
  return (df) => {
    let c = cache.get(df);
    if (c === undefined) {
      c = df === null ? normalQuantile(1 - (1 - confidence) / 2) : tQuantile(1 - (1 - confidence) / 2, df);
      cache.set(df, c);
    }
    return c;
  };
}

const usesSeries = (settings: FitSettings, k: number): boolean => (settings.tau2 === 'reml' || settings.tau2 === 'ml') && k >= SERIES_FROM;

export function sensitivityAnalyses(items: readonly PoolingItem[], full: CorePool, settings: FitSettings, threshold: number): Sensitivity {
  const notes: string[] = [];
  const k = items.length;
  const leaveOneOut: LeaveOneOutRow[] = [];
  const influence: InfluenceRow[] = [];
  const critical = criticalValues(settings.confidence);
  if (k < 2) notes.push('Leave-one-out and influence need at least two trials.');
  else {
    const tau2 = full.tau2 ?? 0;
    const varMu = full.seConventional * full.seConventional;
    let sumW = 0;
    for (const w of full.weights) sumW += w;
    const pools = usesSeries(settings, k - 1) ? leaveOneOutSeries(items, full, settings, critical) : null;
    items.forEach((it, i) => {
      const loo = pools?.[i] ?? poolItems(items.filter((_, j) => j !== i), settings, threshold, full.tau2 ?? undefined);
      leaveOneOut.push({ trial: it.trial, estimate: loo.estimate, se: loo.se, tau2: loo.tau2, lower: loo.lower, upper: loo.upper });
      const v = it.se * it.se;
      const residualVariance = v + tau2 - varMu;
      const looTau2 = loo.tau2 ?? 0;
      influence.push({
        trial: it.trial,
        standardisedResidual: residualVariance > 0 ? (it.estimate - full.estimate) / Math.sqrt(residualVariance) : null,
        studentisedDeletedResidual: (it.estimate - loo.estimate) / Math.sqrt(v + looTau2 + loo.seConventional * loo.seConventional),
        cooksDistance: ((full.estimate - loo.estimate) * (full.estimate - loo.estimate)) / varMu,
        tau2Change: full.tau2 === null || loo.tau2 === null ? null : loo.tau2 - full.tau2,
        leverage: full.weights[i] / sumW,
      });
    });
    if (k === 2) notes.push('With two trials each leave-one-out pool is a single trial: tau² is not estimable there.');
  }
  const dated = items.filter((it) => typeof it.year === 'number' && Number.isFinite(it.year));
  if (dated.length < items.length) {
    const datedSet = new Set(dated);
    notes.push(`Cumulative pooling leaves out trials without a year: ${items.filter((it) => !datedSet.has(it)).map((it) => it.trial).join(', ')}.`);
  }
  const ordered = [...dated].sort((a, b) => (a.year as number) - (b.year as number) || (a.trial < b.trial ? -1 : a.trial > b.trial ? 1 : 0));
  const cumulative = cumulativeRows(ordered, settings, threshold, critical);
  if (ordered.length) notes.push('Cumulative rows add trials in order of year (ties by trial name); each row pools all trials up to and including it.');
  return { leaveOneOut, influence, cumulative, notes };
}

/**
 * Every leave-one-out pool from sums of the trials before and after the one left out (no
 * subtraction, so no cancellation), anchored at the full pool. A pool the series cannot reach
 * exactly is left null for a direct refit.
 */
function leaveOneOutSeries(items: readonly PoolingItem[], full: CorePool, settings: FitSettings, critical: (df: number | null) => number): (PoolRow | null)[] {
  const k = items.length;
  const v = items.map((it) => it.se * it.se);
  const anchor = makeAnchor(v, k, full.tau2 ?? 0, full.estimate);
  const before = new Float64Array((k + 1) * SUM_LENGTH);
  const after = new Float64Array((k + 1) * SUM_LENGTH);
  for (let i = 0; i < k; i++) {
    before.copyWithin((i + 1) * SUM_LENGTH, i * SUM_LENGTH, (i + 1) * SUM_LENGTH);
    addTrialTerms(before, (i + 1) * SUM_LENGTH, v[i], items[i].estimate, anchor);
  }
  for (let i = k - 1; i >= 0; i--) {
    after.copyWithin(i * SUM_LENGTH, (i + 1) * SUM_LENGTH, (i + 2) * SUM_LENGTH);
    addTrialTerms(after, i * SUM_LENGTH, v[i], items[i].estimate, anchor);
  }
  const sums = new Float64Array(SUM_LENGTH);
  const fit: SeriesFit = { tau2: 0, atBoundary: false, estimate: 0, seConventional: 0, weightedRss: 0 };
  const reml = settings.tau2 === 'reml';
  const rows: (PoolRow | null)[] = [];
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < SUM_LENGTH; j++) sums[j] = before[i * SUM_LENGTH + j] + after[(i + 1) * SUM_LENGTH + j];
    const solved = seriesPool(sums, 0, anchor, reml, full.tau2 ?? 0, fit);
    rows.push(solved ? rowFromSeries(solved, k - 1, settings, critical) : null);
  }
  return rows;
}

/**
 * Cumulative pools in the given order, each started from the previous row's tau². Large pools
 * come from running sums, re-anchored at the previous row whenever the next root would lie
 * beyond the series' exact range (or a trial below the anchor's variance unit arrives).
 */
function cumulativeRows(ordered: readonly PoolingItem[], settings: FitSettings, threshold: number, critical: (df: number | null) => number): CumulativeRow[] {
  const rows: CumulativeRow[] = [];
  const v = ordered.map((it) => it.se * it.se);
  const reml = settings.tau2 === 'reml';
  const sums = new Float64Array(SUM_LENGTH);
  const fit: SeriesFit = { tau2: 0, atBoundary: false, estimate: 0, seConventional: 0, weightedRss: 0 };
  let anchor: SeriesAnchor | null = null;
  let previousTau2: number | undefined;
  let previousEstimate = 0;
  const reanchor = (count: number): SeriesAnchor => {
    const a = makeAnchor(v, count, previousTau2 ?? 0, previousEstimate);
    sums.fill(0);
    for (let i = 0; i < count; i++) addTrialTerms(sums, 0, v[i], ordered[i].estimate, a);
    return a;
  };
  ordered.forEach((it, j) => {
    const k = j + 1;
    let pool: PoolRow | null = null;
    if (usesSeries(settings, k) && previousTau2 !== undefined) {
      if (anchor !== null && v[j] + anchor.t0 >= anchor.unit) addTrialTerms(sums, 0, v[j], it.estimate, anchor);
      else anchor = reanchor(k);
      let solved = seriesPool(sums, 0, anchor, reml, previousTau2, fit);
      if (!solved) {
        anchor = reanchor(k);
        solved = seriesPool(sums, 0, anchor, reml, previousTau2, fit);
      }
      if (solved) pool = rowFromSeries(solved, k, settings, critical);
      else anchor = null;
    } else anchor = null;
    if (pool === null) pool = poolItems(ordered.slice(0, k), settings, threshold, previousTau2);
    previousTau2 = pool.tau2 ?? undefined;
    previousEstimate = pool.estimate;
    rows.push({ trial: it.trial, year: it.year as number, k, estimate: pool.estimate, se: pool.se, tau2: pool.tau2, lower: pool.lower, upper: pool.upper });
  });
  return rows;
}
