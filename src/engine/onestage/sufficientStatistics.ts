// Per-trial sufficient statistics, computed once per fit. Each trial's plots are summarised by
// the Gram matrix of B = [trial intercept?, block indicators, treatment indicators, y]; every
// REML quantity later is a function of these small matrices, never of the plots themselves.
import type { NetworkInput, PlotObservation } from '../types.js';
import type { RandomTerm } from './types.js';
import { RANDOM_TERMS } from './types.js';

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
    const keep = new Int32Array(plots.length);
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
  const treatOf = new Int32Array(plots.length);
  const blockIdx = new Int32Array(plots.length);
  const presentFlag = new Uint8Array(globalIndex.length);
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
  for (let g = 0; g < presentFlag.length; g++) if (presentFlag[g]) present.push(g);
  const hasIntercept = termIncluded[0];
  const blockStart = hasIntercept ? 1 : 0;
  const treatStart = blockStart + nBlocks;
  const yColumn = treatStart + present.length;
  const m = yColumn + 1;
  const treatCol = new Int32Array(globalIndex.length).fill(-1);
  present.forEach((g, i) => (treatCol[g] = treatStart + i));
  const gram = new Float64Array(m * m);
  const cols = [0, 0, 0];
  for (let k = 0; k < plots.length; k++) {
    if (!keep[k]) continue;
    const y = plots[k].value as number;
    let c = 0;
    if (hasIntercept) cols[c++] = 0;
    cols[c++] = blockStart + blockIdx[k];
    cols[c++] = treatCol[treatOf[k]];
    for (let a = 0; a < c; a++) {
      const ro = cols[a] * m;
      for (let b = 0; b < c; b++) gram[ro + cols[b]] += 1;
      gram[ro + yColumn] += y;
      gram[yColumn * m + cols[a]] += y;
    }
    gram[yColumn * m + yColumn] += y * y;
  }
  const termOfColumn = new Int8Array(m - 1).fill(-1);
  if (hasIntercept) termOfColumn[0] = 0;
  if (termIncluded[1]) for (let i = 0; i < nBlocks; i++) termOfColumn[blockStart + i] = 1;
  if (termIncluded[2]) for (let i = 0; i < present.length; i++) termOfColumn[treatStart + i] = 2;
  return {
    trial,
    n,
    m,
    gram,
    termOfColumn,
    treatmentColumns: Int32Array.from(present, (_, i) => treatStart + i),
    treatmentIndex: Int32Array.from(present),
    blockColumns: Int32Array.from({ length: nBlocks }, (_, i) => blockStart + i),
    yColumn,
  };
}
