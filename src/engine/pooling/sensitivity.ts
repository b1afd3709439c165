// Sensitivity of the pooled mean: leave-one-trial-out pools, influence measures
// (Viechtbauer & Cheung 2010, Res Synth Methods 1:112-125: standardised and deleted
// residuals, Cook's distance, change in tau²) and cumulative pooling in order of year.
import { poolCore, CorePool } from './poolCore.js';
import type { FitSettings } from './modelFit.js';
import type { CumulativeRow, InfluenceRow, LeaveOneOutRow, PoolingItem, Sensitivity } from './types.js';

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

export function sensitivityAnalyses(items: readonly PoolingItem[], full: CorePool, settings: FitSettings, threshold: number): Sensitivity {
  const notes: string[] = [];
  const k = items.length;
  const leaveOneOut: LeaveOneOutRow[] = [];
  const influence: InfluenceRow[] = [];
  if (k < 2) notes.push('Leave-one-out and influence need at least two trials.');
  else {
    const tau2 = full.tau2 ?? 0;
    const varMu = full.seConventional * full.seConventional;
    let sumW = 0;
    for (const w of full.weights) sumW += w;
    items.forEach((it, i) => {
      const rest = items.filter((_, j) => j !== i);
      const loo = poolItems(rest, settings, threshold, full.tau2 ?? undefined);
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
  let previousTau2: number | undefined;
  const cumulative: CumulativeRow[] = ordered.map((it, j) => {
    const pool = poolItems(ordered.slice(0, j + 1), settings, threshold, previousTau2);
    previousTau2 = pool.tau2 ?? undefined;
    return { trial: it.trial, year: it.year as number, k: j + 1, estimate: pool.estimate, se: pool.se, tau2: pool.tau2, lower: pool.lower, upper: pool.upper };
  });
  if (ordered.length) notes.push('Cumulative rows add trials in order of year (ties by trial name); each row pools all trials up to and including it.');
  return { leaveOneOut, influence, cumulative, notes };
}
