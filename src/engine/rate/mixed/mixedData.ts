// Per-trial sufficient statistics of the mixed quadratic model. Plots are chosen exactly as
// for the per-trial curves (treatments at `at` plus the control at rate 0, finite values,
// not excluded). Rates are divided by the largest tested rate so the columns 1, x, x² are
// of similar size. Random-effect columns of a trial: 1, x, x² (the trial's deviations of
// intercept, slope, curvature) then one indicator per level of each blocking factor.
// Everything the REML criterion needs is a cross-product of these small columns, so the
// trial's n x n covariance is never formed.
import type { NetworkInput, TrialInput } from '../../types.js';
import { RateResponseInputError } from '../errors.js';
import { appliedRates } from '../rateData.js';

/** Blocking factors modelled as random within trial (variance common to all trials). */
export type GroupingFactor = 'block' | 'row' | 'col';

export interface MixedTrialData {
  readonly trial: string;
  readonly n: number;
  /** Tested rates (original units) of this trial, lowest and highest. */
  readonly range: [number, number];
  /** Random-effect columns: 3 coefficient deviations + indicator columns. */
  readonly q: number;
  /** Grouping factor of each indicator column (index into MixedNetworkData.grouping). */
  readonly indicatorFactor: Int32Array;
  /** Z'Z (q x q), Z'X (q x 3), Z'y (q), X'X (3 x 3), X'y (3), y'y. Row-major. */
  readonly ztz: Float64Array;
  readonly ztx: Float64Array;
  readonly zty: Float64Array;
  readonly xtx: Float64Array;
  readonly xty: Float64Array;
  readonly yty: number;
}

export interface MixedNetworkData {
  readonly trials: MixedTrialData[];
  /** Rates were divided by this (the largest tested rate). */
  readonly rateScale: number;
  readonly grouping: GroupingFactor[];
  readonly n: number;
  readonly distinctRates: number;
}

function labelers(trial: TrialInput): [GroupingFactor, (p: TrialInput['plots'][number]) => string | null][] {
  switch (trial.design) {
    case 'completely-randomised':
      return [];
    case 'randomised-blocks':
      return [['block', (p) => p.block]];
    case 'latin-square':
    case 'row-column':
      return [
        ['row', (p) => (p.row === null ? null : String(p.row))],
        ['col', (p) => (p.col === null ? null : String(p.col))],
      ];
  }
}

interface RawTrial {
  readonly trial: string;
  readonly rate: number[];
  readonly y: number[];
  readonly groups: { factor: GroupingFactor; level: number[]; levels: number }[];
}

/**
 * `factor`: the rate factor, so that a treatment applied at a site-specific amount in a trial
 * (TrialInput.appliedLevels) enters that trial at the amount applied there, as in the per-trial
 * curves; without it every trial takes `rates` as given.
 */
export function mixedQuadraticData(network: NetworkInput, planned: Map<string, number>, factor?: string): MixedNetworkData {
  const raw: RawTrial[] = [];
  for (const t of network.trials) {
    const rates = factor === undefined ? planned : appliedRates(t, planned, factor);
    const plots = t.plots.filter((p) => rates.has(p.treatment) && p.value !== null && Number.isFinite(p.value) && !p.excluded);
    if (plots.length === 0) continue;
    const groups: RawTrial['groups'] = [];
    for (const [factor, lab] of labelers(t)) {
      if (!plots.some((p) => lab(p) !== null)) continue;
      if (plots.some((p) => lab(p) === null)) throw new RateResponseInputError(`trial ${t.trial}: a plot has no ${factor} label although the design (${t.design}) needs one`);
      const names = [...new Set(plots.map((p) => lab(p) as string))];
      groups.push({ factor, level: plots.map((p) => names.indexOf(lab(p) as string)), levels: names.length });
    }
    raw.push({ trial: t.trial, rate: plots.map((p) => rates.get(p.treatment) as number), y: plots.map((p) => p.value as number), groups });
  }
  const all = raw.flatMap((r) => r.rate);
  // A loop, not Math.max(...all): spreading hundreds of thousands of plots overflows the stack.
  const rateScale = all.reduce((m, x) => (x > m ? x : m), -Infinity);
  if (!(rateScale > 0)) throw new RateResponseInputError('mixed quadratic: no positive rate among the plots used');
  const grouping = (['block', 'row', 'col'] as GroupingFactor[]).filter((g) => raw.some((r) => r.groups.some((x) => x.factor === g)));
  const trials = raw.map((r) => trialStatistics(r, rateScale, grouping));
  return { trials, rateScale, grouping, n: all.length, distinctRates: new Set(all).size };
}

function trialStatistics(r: RawTrial, scale: number, grouping: GroupingFactor[]): MixedTrialData {
  const n = r.y.length;
  const q = 3 + r.groups.reduce((s, g) => s + g.levels, 0);
  const indicatorFactor = new Int32Array(q - 3);
  let off = 0;
  for (const g of r.groups) {
    indicatorFactor.fill(grouping.indexOf(g.factor), off, off + g.levels);
    off += g.levels;
  }
  const ztz = new Float64Array(q * q);
  const ztx = new Float64Array(q * 3);
  const zty = new Float64Array(q);
  const xtx = new Float64Array(9);
  const xty = new Float64Array(3);
  let yty = 0;
  const z = new Float64Array(q);
  for (let i = 0; i < n; i++) {
    const x = r.rate[i] / scale;
    const y = r.y[i];
    z.fill(0);
    z[0] = 1;
    z[1] = x;
    z[2] = x * x;
    let col = 3;
    for (const g of r.groups) {
      z[col + g.level[i]] = 1;
      col += g.levels;
    }
    for (let a = 0; a < q; a++) {
      if (z[a] === 0) continue;
      for (let b = 0; b < q; b++) ztz[a * q + b] += z[a] * z[b];
      for (let b = 0; b < 3; b++) ztx[a * 3 + b] += z[a] * z[b];
      zty[a] += z[a] * y;
    }
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) xtx[a * 3 + b] += z[a] * z[b];
      xty[a] += z[a] * y;
    }
    yty += y * y;
  }
  return { trial: r.trial, n, range: [Math.min(...r.rate), Math.max(...r.rate)], q, indicatorFactor, ztz, ztx, zty, xtx, xty, yty };
}
