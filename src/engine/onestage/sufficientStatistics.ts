// Per-trial sufficient statistics, computed once per fit. Each trial's plots are summarised by
// the Gram matrix of B = [trial intercept?, block indicators, treatment indicators, y]; every
// REML quantity later is a function of these small matrices, never of the plots themselves.
import type { NetworkInput, PlotObservation } from '../types.js';
import type { RandomTerm } from './types.js';
import { RANDOM_TERMS } from './types.js';
import { f64, i32 } from './arena.js';

/** Term index of a column: 0 trial, 1 block, 2 treatment:trial (see RANDOM_TERMS). */
export type TermIndex = 0 | 1 | 2;

export interface TrialStatistics {
  readonly trial: string;
  readonly n: number;
  /** Columns of B including y (last). */
  readonly m: number;
  /** B'B, m x m row-major. */
  readonly gram: Float64Array;
  /** For each column except y: the random term it belongs to, or -1 (a fixed-only column). */
  readonly termOfColumn: Int8Array;
  /** Columns holding the treatments present in this trial, and their global treatment index. */
  readonly treatmentColumns: Int32Array;
  readonly treatmentIndex: Int32Array;
  readonly blockColumns: Int32Array;
  readonly yColumn: number;
}

export interface NetworkStatistics {
  /** Treatment codes in fixed-effect order (only treatments observed somewhere). */
  readonly treatments: string[];
  readonly trials: TrialStatistics[];
  readonly nObservations: number;
  readonly droppedPlots: number;
  /** Whether each of RANDOM_TERMS is in the model. */
  readonly termIncluded: readonly boolean[];
}

export class OneStageDataError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'OneStageDataError';
  }
}

export function buildNetworkStatistics(network: NetworkInput, random: readonly RandomTerm[]): NetworkStatistics {
  const termIncluded = RANDOM_TERMS.map((t) => random.includes(t));
  const known = new Map(network.treatments.map((t, i) => [t.code, i]));
  const observed = new Array<boolean>(network.treatments.length).fill(false);
  let dropped = 0;
  // keep[k] = 1 + network treatment index of plot k, or 0 when the plot is dropped
  const usable: { trial: string; plots: readonly PlotObservation[]; keep: Int32Array }[] = [];
  for (const trial of network.trials) {
    const plots = trial.plots;
    const keep = i32(plots.length);
    let any = false;
    for (let k = 0; k < plots.length; k++) {
      const p = plots[k];
      const t = known.get(p.treatment);
      if (t === undefined) throw new OneStageDataError(`trial "${trial.trial}": plot treatment "${p.treatment}" is not one of the network's treatments`);
      if (p.value === null || p.excluded || !Number.isFinite(p.value)) {
        dropped++;
        continue;
      }
      observed[t] = true;
      keep[k] = t + 1;
      any = true;
    }
    if (any) usable.push({ trial: trial.trial, plots, keep });
  }
  const globalIndex = new Array<number>(network.treatments.length).fill(-1);
  const treatments: string[] = [];
  network.treatments.forEach((t, i) => {
    if (observed[i]) {
      globalIndex[i] = treatments.length;
      treatments.push(t.code);
    }
  });
  const blocks: BlockNumbering = { ids: new Map(), local: [], stamp: [] };
  const trials = usable.map((u, i) => trialStatistics(u.trial, u.plots, u.keep, globalIndex, termIncluded, blocks, i));
  const nObservations = trials.reduce((s, t) => s + t.n, 0);
  if (trials.length === 0) throw new OneStageDataError('no usable plots: every value is missing or excluded');
  return { treatments, trials, nObservations, droppedPlots: dropped, termIncluded };
}

/** Block labels numbered once for the whole network; `local`/`stamp` give each trial's own numbering. */
interface BlockNumbering {
  readonly ids: Map<string, number>;
  readonly local: number[];
  readonly stamp: number[];
}

function trialStatistics(
  trial: string,
  plots: readonly PlotObservation[],
  keep: Int32Array,
  globalIndex: readonly number[],
  termIncluded: readonly boolean[],
  blocks: BlockNumbering,
  trialNo: number,
): TrialStatistics {
  // one pass to number the blocks and find the treatments present
  let nBlocks = 0;
  const treatOf = plotScratch(0, plots.length);
  const blockIdx = plotScratch(1, plots.length);
  const presentFlag = plotScratch(2, globalIndex.length);
  presentFlag.fill(0, 0, globalIndex.length);
  let n = 0;
  for (let k = 0; k < plots.length; k++) {
    if (!keep[k]) continue;
    n++;
    const p = plots[k];
    const label = p.block ?? '';
    let id = blocks.ids.get(label);
    if (id === undefined) {
      id = blocks.ids.size;
      blocks.ids.set(label, id);
      blocks.stamp.push(-1);
      blocks.local.push(0);
    }
    if (blocks.stamp[id] !== trialNo) {
      blocks.stamp[id] = trialNo;
      blocks.local[id] = nBlocks++;
    }
    blockIdx[k] = blocks.local[id];
    const g = globalIndex[keep[k] - 1];
    treatOf[k] = g;
    presentFlag[g] = 1;
  }
  const present: number[] = [];
  for (let g = 0; g < globalIndex.length; g++) if (presentFlag[g]) present.push(g);
  const hasIntercept = termIncluded[0];
  const blockStart = hasIntercept ? 1 : 0;
  const treatStart = blockStart + nBlocks;
  const yColumn = treatStart + present.length;
  const m = yColumn + 1;
  const treatCol = plotScratch(3, globalIndex.length);
  for (let i = 0; i < present.length; i++) treatCol[present[i]] = treatStart + i;
  // B'B from per-cell counts and per-column sums of y (each sum in plot order, as a direct
  // accumulation of B'B would add them): a plot touches one block and one treatment
  const nT = present.length;
  const counts = plotScratch(4, nBlocks * nT);
  counts.fill(0, 0, nBlocks * nT);
  const ySums = sumScratch(nBlocks + nT);
  ySums.fill(0, 0, nBlocks + nT);
  const yAll = accumulatePlots(plots, keep, blockIdx, treatOf, treatCol, treatStart, nT, nBlocks, counts, ySums);
  const gram = f64(m * m);
  assembleGram(gram, m, hasIntercept, blockStart, treatStart, nBlocks, nT, counts, ySums, yAll);
  const termOfColumn = new Int8Array(m - 1).fill(-1);
  if (hasIntercept) termOfColumn[0] = 0;
  if (termIncluded[1]) for (let i = 0; i < nBlocks; i++) termOfColumn[blockStart + i] = 1;
  if (termIncluded[2]) for (let i = 0; i < present.length; i++) termOfColumn[treatStart + i] = 2;
  const treatmentColumns = i32(present.length);
  const treatmentIndex = i32(present.length);
  for (let i = 0; i < present.length; i++) {
    treatmentColumns[i] = treatStart + i;
    treatmentIndex[i] = present[i];
  }
  const blockColumns = i32(nBlocks);
  for (let i = 0; i < nBlocks; i++) blockColumns[i] = blockStart + i;
  return { trial, n, m, gram, termOfColumn, treatmentColumns, treatmentIndex, blockColumns, yColumn };
}

/** Per-cell plot counts (block x treatment) and y sums (blocks, then treatments); returns [sum y, sum y^2]. */
function accumulatePlots(
  plots: readonly PlotObservation[],
  keep: Int32Array,
  blockIdx: Int32Array,
  treatOf: Int32Array,
  treatCol: Int32Array,
  treatStart: number,
  nT: number,
  nBlocks: number,
  counts: Int32Array,
  ySums: Float64Array,
): Float64Array {
  let sum = 0;
  let sumSq = 0;
  for (let k = 0; k < plots.length; k++) {
    if (!keep[k]) continue;
    const y = plots[k].value as number;
    const b = blockIdx[k];
    const t = treatCol[treatOf[k]] - treatStart;
    counts[b * nT + t]++;
    ySums[b] += y;
    ySums[nBlocks + t] += y;
    sum += y;
    sumSq += y * y;
  }
  totals[0] = sum;
  totals[1] = sumSq;
  return totals;
}
const totals = new Float64Array(2);

function assembleGram(gram: Float64Array, m: number, hasIntercept: boolean, blockStart: number, treatStart: number, nBlocks: number, nT: number, counts: Int32Array, ySums: Float64Array, yTotals: Float64Array): void {
  const yc = m - 1;
  const set = (i: number, j: number, v: number): void => {
    gram[i * m + j] = v;
    gram[j * m + i] = v;
  };
  let n = 0;
  for (let b = 0; b < nBlocks; b++) {
    let nb = 0;
    for (let t = 0; t < nT; t++) {
      const c = counts[b * nT + t];
      nb += c;
      set(blockStart + b, treatStart + t, c);
    }
    set(blockStart + b, blockStart + b, nb);
    set(blockStart + b, yc, ySums[b]);
    if (hasIntercept) set(0, blockStart + b, nb);
    n += nb;
  }
  for (let t = 0; t < nT; t++) {
    let nt = 0;
    for (let b = 0; b < nBlocks; b++) nt += counts[b * nT + t];
    set(treatStart + t, treatStart + t, nt);
    set(treatStart + t, yc, ySums[nBlocks + t]);
    if (hasIntercept) set(0, treatStart + t, nt);
  }
  if (hasIntercept) {
    set(0, 0, n);
    set(0, yc, yTotals[0]);
  }
  gram[yc * m + yc] = yTotals[1];
}

// Per-plot working arrays of trialStatistics, reused from trial to trial (one trial at a time).
const scratchInts: Int32Array[] = [new Int32Array(64), new Int32Array(64), new Int32Array(64), new Int32Array(64), new Int32Array(64)];
let scratchSums = new Float64Array(64);
function sumScratch(n: number): Float64Array {
  if (scratchSums.length < n) scratchSums = new Float64Array(Math.max(n, 2 * scratchSums.length));
  return scratchSums;
}
function plotScratch(slot: number, n: number): Int32Array {
  if (scratchInts[slot].length < n) scratchInts[slot] = new Int32Array(Math.max(n, 2 * scratchInts[slot].length));
  return scratchInts[slot];
}
