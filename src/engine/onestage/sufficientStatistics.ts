// Per-trial sufficient statistics, computed once per fit. Each trial's plots are summarised by
// the Gram matrix of B = [trial intercept?, block indicators, treatment indicators, y]; every
// REML quantity later is a function of these small matrices, never of the plots themselves.
import type { NetworkInput } from '../types.js';
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
  const usable: { trial: string; plots: { t: number; block: string; y: number }[] }[] = [];
  for (const trial of network.trials) {
    const plots: { t: number; block: string; y: number }[] = [];
    for (const p of trial.plots) {
      const t = known.get(p.treatment);
      if (t === undefined) throw new OneStageDataError(`trial "${trial.trial}": plot treatment "${p.treatment}" is not one of the network's treatments`);
      if (p.value === null || p.excluded || !Number.isFinite(p.value)) {
        dropped++;
        continue;
      }
      observed[t] = true;
      plots.push({ t, block: p.block ?? '', y: p.value });
    }
    if (plots.length > 0) usable.push({ trial: trial.trial, plots });
  }
  const globalIndex = new Array<number>(network.treatments.length).fill(-1);
  const treatments: string[] = [];
  network.treatments.forEach((t, i) => {
    if (observed[i]) {
      globalIndex[i] = treatments.length;
      treatments.push(t.code);
    }
  });
  const trials = usable.map((u) => trialStatistics(u.trial, u.plots, globalIndex, termIncluded));
  const nObservations = trials.reduce((s, t) => s + t.n, 0);
  if (trials.length === 0) throw new OneStageDataError('no usable plots: every value is missing or excluded');
  return { treatments, trials, nObservations, droppedPlots: dropped, termIncluded };
}

function trialStatistics(
  trial: string,
  plots: readonly { t: number; block: string; y: number }[],
  globalIndex: readonly number[],
  termIncluded: readonly boolean[],
): TrialStatistics {
  const blocks = [...new Set(plots.map((p) => p.block))];
  const present = [...new Set(plots.map((p) => globalIndex[p.t]))].sort((a, b) => a - b);
  const hasIntercept = termIncluded[0];
  const blockStart = hasIntercept ? 1 : 0;
  const treatStart = blockStart + blocks.length;
  const yColumn = treatStart + present.length;
  const m = yColumn + 1;
  const blockCol = new Map(blocks.map((b, i) => [b, blockStart + i]));
  const treatCol = new Map(present.map((g, i) => [g, treatStart + i]));
  const gram = new Float64Array(m * m);
  const cols = [0, 0, 0];
  for (const p of plots) {
    let k = 0;
    if (hasIntercept) cols[k++] = 0;
    cols[k++] = blockCol.get(p.block)!;
    cols[k++] = treatCol.get(globalIndex[p.t])!;
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) gram[cols[a] * m + cols[b]] += 1;
      gram[cols[a] * m + yColumn] += p.y;
      gram[yColumn * m + cols[a]] += p.y;
    }
    gram[yColumn * m + yColumn] += p.y * p.y;
  }
  const termOfColumn = new Int8Array(m - 1).fill(-1);
  if (hasIntercept) termOfColumn[0] = 0;
  if (termIncluded[1]) for (let i = 0; i < blocks.length; i++) termOfColumn[blockStart + i] = 1;
  if (termIncluded[2]) for (let i = 0; i < present.length; i++) termOfColumn[treatStart + i] = 2;
  return {
    trial,
    n: plots.length,
    m,
    gram,
    termOfColumn,
    treatmentColumns: Int32Array.from(present, (_, i) => treatStart + i),
    treatmentIndex: Int32Array.from(present),
    blockColumns: Int32Array.from(blocks, (_, i) => blockStart + i),
    yColumn,
  };
}
