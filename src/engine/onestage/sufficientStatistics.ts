// Per-trial sufficient statistics, computed once per fit. Each trial's plots are summarised by
// the Gram matrix of B = [trial intercept?, block indicators, treatment indicators, y]; every
// REML quantity later is a function of these small matrices, never of the plots themselves.
import type { NetworkInput, PlotObservation, TrialInput } from '../types.js';
import type { PlotColumns, PlotColumnTable } from '../plotColumns.js';
import type { RandomTerm } from './types.js';
import { RANDOM_TERMS } from './types.js';
import { f64 } from './arena.js';
import { ownValue } from '../ownValue.js';

/** Term index of a column: 0 trial, 1 block, 2 treatment-by-trial (see RANDOM_TERMS). */
export type TermIndex = 0 | 1 | 2;

export interface TrialStatistics {
  readonly trial: string;
  readonly n: number;
  /** Columns of B including y (last). */
  readonly m: number;
  /** B'B, m x m row-major. */
  readonly gram: Float64Array;
  // The four role arrays below are shared by trials laid out alike: read them, never write.
  /** For each column except y: the random term it belongs to, or -1 (a fixed-only column). */
  readonly termOfColumn: Int8Array;
  /**
   * Columns of the fixed effects in this trial and their index among NetworkStatistics.fixed:
   * first the treatments present (treatmentCount of them), then the covariates.
   */
  readonly fixedColumns: Int32Array;
  readonly fixedIndex: Int32Array;
  readonly treatmentCount: number;
  readonly blockColumns: Int32Array;
  readonly yColumn: number;
  /** An earlier trial (index in NetworkStatistics.trials) known to have the identical design, or -1: saves comparing Gram matrices. */
  readonly sameDesignAs: number;
}

export interface NetworkStatistics {
  /** Treatment codes in fixed-effect order (only treatments observed somewhere). */
  readonly treatments: string[];
  /** Names of all fixed effects: the treatments (cell means), then the covariates. */
  readonly fixed: string[];
  /** Trial covariates with a fixed slope, centred at their mean over the trials used. */
  readonly covariates: readonly { readonly name: string; readonly centre: number }[];
  /** Trials left out because a covariate has no value there. */
  readonly trialsWithoutCovariates: string[];
  readonly trials: TrialStatistics[];
  readonly nObservations: number;
  readonly droppedPlots: number;
  /** Whether each of RANDOM_TERMS is in the model. */
  readonly termIncluded: readonly boolean[];
}

/** Data the model cannot be fitted to; the api reports it as invalid input (its `code`). */
export class OneStageDataError extends Error {
  readonly code = 'invalid-input';
  constructor(message: string) {
    super(message);
    this.name = 'OneStageDataError';
  }
}

export function buildNetworkStatistics(network: NetworkInput, random: readonly RandomTerm[], covariateNames: readonly string[] = []): NetworkStatistics {
  const termIncluded = RANDOM_TERMS.map((t) => random.includes(t));
  const { withValues, without } = trialsWithCovariates(network, covariateNames);
  const known = new Map(network.treatments.map((t, i) => [t.code, i]));
  const observed = new Array<boolean>(network.treatments.length).fill(false);
  const tables = new Map<PlotColumnTable, Int32Array>();
  let dropped = 0;
  // first pass: which treatments have a usable plot anywhere, and which trials have any
  const usable: TrialInput[] = [];
  for (const trial of withValues) {
    const c = trial.plotColumns;
    const r = c ? scanColumns(trial.trial, c, networkTreatmentOf(c.table, tables, known), observed) : scanPlots(trial, known, observed);
    dropped += r.dropped;
    if (r.any) usable.push(trial);
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
  // covariates centred at their mean over the trials used: the treatment means are then the
  // means at the average trial's covariate values
  const k = covariateNames.length;
  const centred = centredCovariates(usable, covariateNames);
  const covariates = covariateNames.map((name, a) => ({ name, centre: centred.centres[a] }));
  checkCovariatesVary(centred.values, covariates);
  previousTrial = null;
  const trials = usable.map((trial, i) => {
    const c = trial.plotColumns;
    const n = c ? columnPlots(c, tables.get(c.table)!, globalIndex, blocks, i) : objectPlots(trial.plots, known, globalIndex, blocks, i);
    return trialStatistics(trial.trial, i, n, globalIndex.length, treatments.length, centred.values.subarray(i * k, (i + 1) * k), termIncluded);
  });
  previousTrial = null;
  const nObservations = trials.reduce((s, t) => s + t.n, 0);
  if (trials.length === 0) throw new OneStageDataError('no usable plots: every value is missing or excluded');
  return { treatments, fixed: [...treatments, ...covariateNames], covariates, trialsWithoutCovariates: without, trials, nObservations, droppedPlots: dropped, termIncluded };
}

/** Each trial's covariate values (trials x covariates, row-major) centred at their means over the trials, and the means. */
function centredCovariates(trials: readonly TrialInput[], names: readonly string[]): { values: Float64Array; centres: Float64Array } {
  const k = names.length;
  const values = new Float64Array(trials.length * k);
  const centres = new Float64Array(k);
  trials.forEach((t, i) => names.forEach((name, a) => (values[i * k + a] = t.covariates![name] as number)));
  for (let a = 0; a < k; a++) {
    for (let i = 0; i < trials.length; i++) centres[a] += values[i * k + a];
    centres[a] /= trials.length;
    for (let i = 0; i < trials.length; i++) values[i * k + a] -= centres[a];
  }
  return { values, centres };
}

/**
 * Trial covariates must vary across the trials used, and none may be a linear combination of
 * the others: otherwise a slope is not estimable (its column is a combination of the treatment
 * columns). Checked on the centred trial-by-covariate matrix by a pivoted Gram elimination.
 */
function checkCovariatesVary(centred: Float64Array, covariates: readonly { name: string; centre: number }[]): void {
  const k = covariates.length;
  if (k === 0) return;
  const s = new Float64Array(k * k);
  for (let o = 0; o < centred.length; o += k) for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) s[a * k + b] += centred[o + a] * centred[o + b];
  const scale = Array.from({ length: k }, (_, a) => s[a * k + a]);
  for (let a = 0; a < k; a++) {
    // what is left of covariate a after the ones before it, relative to its own spread
    if (!(s[a * k + a] > 1e-10 * scale[a])) {
      const which = covariates[a].name;
      throw new OneStageDataError(
        scale[a] > 0
          ? `covariate "${which}" is a linear combination of ${covariates.slice(0, a).map((c) => `"${c.name}"`).join(', ')} over the trials used; its slope cannot be estimated: leave one of them out`
          : `covariate "${which}" has the same value in every trial used (${covariates[a].centre}); its slope cannot be estimated`,
      );
    }
    for (let b = a + 1; b < k; b++) {
      const f = s[b * k + a] / s[a * k + a];
      for (let c = a; c < k; c++) s[b * k + c] -= f * s[a * k + c];
    }
  }
}

/** The trials with a number for every covariate; a covariate that is not a number somewhere is an error. */
function trialsWithCovariates(network: NetworkInput, names: readonly string[]): { withValues: readonly TrialInput[]; without: string[] } {
  if (names.length === 0) return { withValues: network.trials, without: [] };
  const withValues: TrialInput[] = [];
  const without: string[] = [];
  for (const trial of network.trials) {
    let complete = true;
    for (const name of names) {
      const v = ownValue(trial.covariates, name);
      if (v === undefined || v === null) complete = false;
      else if (typeof v !== 'number' || !Number.isFinite(v)) throw new OneStageDataError(`trial "${trial.trial}": covariate "${name}" is ${JSON.stringify(v)}, not a number; a fixed covariate needs numeric values`);
    }
    if (complete) withValues.push(trial);
    else without.push(trial.trial);
  }
  return { withValues, without };
}

function unknownTreatment(trial: string, code: string): OneStageDataError {
  return new OneStageDataError(`trial "${trial}": plot treatment "${code}" is not one of the network's treatments`);
}

function usableValue(p: PlotObservation): boolean {
  return p.value !== null && !p.excluded && Number.isFinite(p.value);
}

function scanPlots(trial: TrialInput, known: ReadonlyMap<string, number>, observed: boolean[]): { dropped: number; any: boolean } {
  let dropped = 0;
  let any = false;
  for (const p of trial.plots) {
    const t = known.get(p.treatment);
    if (t === undefined) throw unknownTreatment(trial.trial, p.treatment);
    if (!usableValue(p)) {
      dropped++;
      continue;
    }
    observed[t] = true;
    any = true;
  }
  return { dropped, any };
}

/** Network treatment index of each of a table's treatment ids (-1 = not in the network), made once per table. */
function networkTreatmentOf(table: PlotColumnTable, cache: Map<PlotColumnTable, Int32Array>, known: ReadonlyMap<string, number>): Int32Array {
  let map = cache.get(table);
  if (!map) {
    map = Int32Array.from(table.treatmentCodes, (code) => known.get(code) ?? -1);
    cache.set(table, map);
  }
  return map;
}

function scanColumns(trial: string, c: PlotColumns, toNetwork: Int32Array, observed: boolean[]): { dropped: number; any: boolean } {
  const { treatment, value } = c.table;
  let dropped = 0;
  let any = false;
  for (let i = c.start; i < c.start + c.count; i++) {
    const t = toNetwork[treatment[i]];
    if (t < 0) throw unknownTreatment(trial, c.table.treatmentCodes[treatment[i]]);
    // NaN marks a missing value in the columns; any other non-finite value is dropped as in scanPlots
    if (!Number.isFinite(value[i])) {
      dropped++;
      continue;
    }
    observed[t] = true;
    any = true;
  }
  return { dropped, any };
}

/** Block labels numbered once for the whole network; `local`/`stamp` give each trial's own numbering. */
interface BlockNumbering {
  readonly ids: Map<string, number>;
  readonly local: number[];
  readonly stamp: number[];
}

/** The trial's local number for a block label, numbering blocks in order of first appearance within the trial. */
function trialBlockNumber(blocks: BlockNumbering, label: string, trialNo: number, nBlocks: { n: number }): number {
  let id = blocks.ids.get(label);
  if (id === undefined) {
    id = blocks.ids.size;
    blocks.ids.set(label, id);
    blocks.stamp.push(-1);
    blocks.local.push(0);
  }
  if (blocks.stamp[id] !== trialNo) {
    blocks.stamp[id] = trialNo;
    blocks.local[id] = nBlocks.n++;
  }
  return blocks.local[id];
}

// The usable plots of the trial being summarised, in plot order: compact treatment index,
// local block number and value (reused from trial to trial).
let plotTreat = new Int32Array(64);
let plotBlock = new Int32Array(64);
let plotY = new Float64Array(64);
const blockCount = { n: 0 };

function ensurePlotScratch(n: number): void {
  if (plotY.length >= n) return;
  const size = Math.max(n, 2 * plotY.length);
  plotTreat = new Int32Array(size);
  plotBlock = new Int32Array(size);
  plotY = new Float64Array(size);
}

/** Fills the plot scratch from plot objects; returns the number of usable plots. */
function objectPlots(plots: readonly PlotObservation[], known: ReadonlyMap<string, number>, globalIndex: readonly number[], blocks: BlockNumbering, trialNo: number): number {
  ensurePlotScratch(plots.length);
  blockCount.n = 0;
  let n = 0;
  for (const p of plots) {
    if (!usableValue(p)) continue;
    plotTreat[n] = globalIndex[known.get(p.treatment)!];
    plotBlock[n] = trialBlockNumber(blocks, p.block ?? '', trialNo, blockCount);
    plotY[n] = p.value as number;
    n++;
  }
  return n;
}

/** Fills the plot scratch from a trial's columns; returns the number of usable plots. */
function columnPlots(c: PlotColumns, toNetwork: Int32Array, globalIndex: readonly number[], blocks: BlockNumbering, trialNo: number): number {
  const { treatment, block, value, blockLabels } = c.table;
  ensurePlotScratch(c.count);
  blockCount.n = 0;
  let n = 0;
  let lastBlock = -2;
  let lastLocal = -1;
  for (let i = c.start; i < c.start + c.count; i++) {
    const y = value[i];
    if (!Number.isFinite(y)) continue;
    plotTreat[n] = globalIndex[toNetwork[treatment[i]]];
    const b = block[i];
    if (b !== lastBlock) {
      lastBlock = b;
      lastLocal = trialBlockNumber(blocks, b < 0 ? '' : blockLabels[b], trialNo, blockCount);
    }
    plotBlock[n] = lastLocal;
    plotY[n] = y;
    n++;
  }
  return n;
}

/** Statistics of the trial whose n usable plots are in the plot scratch (blockCount.n blocks). */
/** The trial summarised last in this network, for the shortcut in trialStatistics. */
let previousTrial: { readonly stats: TrialStatistics; readonly index: number; readonly roles: ColumnRoles; readonly counts: Int32Array } | null = null;

/** Statistics of the trial whose n usable plots are in the plot scratch (blockCount.n blocks). */
function trialStatistics(trial: string, index: number, n: number, nTreatments: number, nObserved: number, z: Float64Array, termIncluded: readonly boolean[]): TrialStatistics {
  const nBlocks = blockCount.n;
  const presentFlag = plotScratch(0, nTreatments);
  presentFlag.fill(0, 0, nTreatments);
  for (let k = 0; k < n; k++) presentFlag[plotTreat[k]] = 1;
  const present: number[] = [];
  for (let g = 0; g < nTreatments; g++) if (presentFlag[g]) present.push(g);
  const hasIntercept = termIncluded[0];
  const blockStart = hasIntercept ? 1 : 0;
  const treatStart = blockStart + nBlocks;
  const covStart = treatStart + present.length;
  const yColumn = covStart + z.length;
  const m = yColumn + 1;
  const treatCol = plotScratch(1, nTreatments);
  for (let i = 0; i < present.length; i++) treatCol[present[i]] = treatStart + i;
  // B'B from per-cell counts and per-column sums of y (each sum in plot order, as a direct
  // accumulation of B'B would add them): a plot touches one block and one treatment
  const nT = present.length;
  const counts = plotScratch(2, nBlocks * nT);
  counts.fill(0, 0, nBlocks * nT);
  const ySums = sumScratch(nBlocks + nT);
  ySums.fill(0, 0, nBlocks + nT);
  const yAll = accumulatePlots(n, treatCol, treatStart, nT, nBlocks, counts, ySums);
  const roles = columnRoles(present, nBlocks, termIncluded, z.length, nObserved);
  const gram = f64(m * m);
  // Laid out like the trial before (same roles, plots and cell counts, no covariate values that
  // differ between trials): its design block is this trial's too, copied whole; only the y row
  // and column are new.
  const prev = previousTrial;
  const like = z.length === 0 && prev !== null && prev.roles === roles && prev.stats.n === n && sameCounts(prev.counts, counts, nBlocks * nT);
  if (like) gram.set(prev.stats.gram);
  else {
    designGram(gram, m, hasIntercept, blockStart, treatStart, nBlocks, nT, counts);
    if (z.length > 0) covariateColumns(gram, m, n, covStart, z, yAll[0]);
  }
  yRowAndColumn(gram, m, hasIntercept, blockStart, treatStart, nBlocks, nT, ySums, yAll);
  const sameDesignAs = like ? (prev.stats.sameDesignAs >= 0 ? prev.stats.sameDesignAs : prev.index) : -1;
  const { termOfColumn, fixedColumns, fixedIndex, blockColumns } = roles;
  const stats: TrialStatistics = { trial, n, m, gram, termOfColumn, fixedColumns, fixedIndex, treatmentCount: nT, blockColumns, yColumn, sameDesignAs };
  previousTrial = { stats, index, roles, counts: like ? prev.counts : counts.slice(0, nBlocks * nT) };
  return stats;
}

function sameCounts(a: Int32Array, b: Int32Array, n: number): boolean {
  if (a.length !== n) return false;
  for (let i = 0; i < n; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** The y row and column of B'B: sums of y by block, by treatment, in total, and y'y (covariate entries are covariateColumns'). */
function yRowAndColumn(gram: Float64Array, m: number, hasIntercept: boolean, blockStart: number, treatStart: number, nBlocks: number, nT: number, ySums: Float64Array, yTotals: Float64Array): void {
  const yc = m - 1;
  for (let b = 0; b < nBlocks; b++) setPair(gram, m, blockStart + b, yc, ySums[b]);
  for (let t = 0; t < nT; t++) setPair(gram, m, treatStart + t, yc, ySums[nBlocks + t]);
  if (hasIntercept) setPair(gram, m, 0, yc, yTotals[0]);
  gram[yc * m + yc] = yTotals[1];
}

/**
 * The columns of trial-level covariates (centred values z, constant within the trial): each is
 * z_a times the all-ones column, so its products with the other columns are z_a times their
 * plot counts (the diagonal of the block and treatment part, or n) and sum of y.
 */
function covariateColumns(gram: Float64Array, m: number, n: number, covStart: number, z: Float64Array, sumY: number): void {
  const yc = m - 1;
  for (let a = 0; a < z.length; a++) {
    const col = covStart + a;
    // block, treatment (and intercept) columns: their diagonal entry is their plot count
    for (let j = 0; j < covStart; j++) setPair(gram, m, j, col, z[a] * countOf(gram, m, j));
    for (let b = 0; b <= a; b++) setPair(gram, m, covStart + b, col, z[a] * z[b] * n);
    setPair(gram, m, col, yc, z[a] * sumY);
  }
}

/** Plot count of an indicator column (intercept, block or treatment): its diagonal entry of B'B. */
function countOf(gram: Float64Array, m: number, j: number): number {
  return gram[j * m + j];
}

/** Which columns are which in a trial's B (read-only, shared by trials laid out alike). */
interface ColumnRoles {
  readonly termOfColumn: Int8Array;
  readonly fixedColumns: Int32Array;
  readonly fixedIndex: Int32Array;
  readonly blockColumns: Int32Array;
}

// One-entry cache: trials in a network are mostly laid out alike (same blocks, same
// treatments), and then share one set of role arrays instead of each allocating four.
let lastRoles: { present: number[]; nBlocks: number; termIncluded: readonly boolean[]; nCovariates: number; roles: ColumnRoles } | null = null;

/** Roles for the treatments present (compact indices), nBlocks blocks and nCovariates covariates (indices after the nObserved treatments). */
function columnRoles(present: number[], nBlocks: number, termIncluded: readonly boolean[], nCovariates: number, nObserved: number): ColumnRoles {
  const last = lastRoles;
  if (last && last.nBlocks === nBlocks && last.termIncluded === termIncluded && last.nCovariates === nCovariates && sameList(last.present, present)) return last.roles;
  const hasIntercept = termIncluded[0];
  const blockStart = hasIntercept ? 1 : 0;
  const treatStart = blockStart + nBlocks;
  const covStart = treatStart + present.length;
  const m = covStart + nCovariates + 1;
  const termOfColumn = new Int8Array(m - 1).fill(-1);
  if (hasIntercept) termOfColumn[0] = 0;
  if (termIncluded[1]) for (let i = 0; i < nBlocks; i++) termOfColumn[blockStart + i] = 1;
  if (termIncluded[2]) for (let i = 0; i < present.length; i++) termOfColumn[treatStart + i] = 2;
  const fixedColumns = new Int32Array(present.length + nCovariates);
  const fixedIndex = new Int32Array(present.length + nCovariates);
  for (let i = 0; i < present.length; i++) {
    fixedColumns[i] = treatStart + i;
    fixedIndex[i] = present[i];
  }
  for (let a = 0; a < nCovariates; a++) {
    fixedColumns[present.length + a] = covStart + a;
    fixedIndex[present.length + a] = nObserved + a;
  }
  const blockColumns = new Int32Array(nBlocks);
  for (let i = 0; i < nBlocks; i++) blockColumns[i] = blockStart + i;
  const roles = { termOfColumn, fixedColumns, fixedIndex, blockColumns };
  lastRoles = { present, nBlocks, termIncluded, nCovariates, roles };
  return roles;
}

function sameList(a: readonly number[], b: readonly number[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Per-cell plot counts (block x treatment) and y sums (blocks, then treatments) of the plot scratch; returns [sum y, sum y^2]. */
function accumulatePlots(n: number, treatCol: Int32Array, treatStart: number, nT: number, nBlocks: number, counts: Int32Array, ySums: Float64Array): Float64Array {
  let sum = 0;
  let sumSq = 0;
  for (let k = 0; k < n; k++) {
    const y = plotY[k];
    const b = plotBlock[k];
    const t = treatCol[plotTreat[k]] - treatStart;
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

/** The design part of B'B (intercept, block and treatment columns) from the cell counts. */
function designGram(gram: Float64Array, m: number, hasIntercept: boolean, blockStart: number, treatStart: number, nBlocks: number, nT: number, counts: Int32Array): void {
  let n = 0;
  for (let b = 0; b < nBlocks; b++) {
    const nb = blockRow(gram, m, blockStart + b, treatStart, counts, b * nT, nT);
    setPair(gram, m, blockStart + b, blockStart + b, nb);
    if (hasIntercept) setPair(gram, m, 0, blockStart + b, nb);
    n += nb;
  }
  for (let t = 0; t < nT; t++) {
    let nt = 0;
    for (let b = 0; b < nBlocks; b++) nt += counts[b * nT + t];
    setPair(gram, m, treatStart + t, treatStart + t, nt);
    if (hasIntercept) setPair(gram, m, 0, treatStart + t, nt);
  }
  if (hasIntercept) setPair(gram, m, 0, 0, n);
}

/** A block's row of plot counts by treatment (mirrored into the columns); returns the block's plot count. */
function blockRow(gram: Float64Array, m: number, row: number, treatStart: number, counts: Int32Array, co: number, nT: number): number {
  let nb = 0;
  for (let t = 0; t < nT; t++) {
    const c = counts[co + t];
    nb += c;
    gram[row * m + treatStart + t] = c;
    gram[(treatStart + t) * m + row] = c;
  }
  return nb;
}

function setPair(gram: Float64Array, m: number, i: number, j: number, v: number): void {
  gram[i * m + j] = v;
  gram[j * m + i] = v;
}

// Per-plot working arrays of trialStatistics, reused from trial to trial (one trial at a time).
const scratchInts: Int32Array[] = [new Int32Array(64), new Int32Array(64), new Int32Array(64)];
let scratchSums = new Float64Array(64);
function sumScratch(n: number): Float64Array {
  if (scratchSums.length < n) scratchSums = new Float64Array(Math.max(n, 2 * scratchSums.length));
  return scratchSums;
}
function plotScratch(slot: number, n: number): Int32Array {
  if (scratchInts[slot].length < n) scratchInts[slot] = new Int32Array(Math.max(n, 2 * scratchInts[slot].length));
  return scratchInts[slot];
}
