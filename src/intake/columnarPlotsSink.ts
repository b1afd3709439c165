// The sink behind an analysis straight from a file with one row per plot: each validated plot
// goes into a few file-wide typed arrays (engine/plotColumns.ts) instead of becoming an object,
// so reading a large file leaves almost nothing for the garbage collector to copy. At the end
// the plots are grouped by trial (a stable counting sort, skipped when the file already is).
import type { PlotColumns, PlotColumnTable } from '../engine/plotColumns.js';
import type { PlotSink, StoredPlot } from './plotSink.js';

const START = 1024;

export class ColumnarPlotsSink implements PlotSink {
  private count = 0;
  private trial = new Int32Array(START);
  private treatment = new Int32Array(START);
  private block = new Int32Array(START);
  private value = new Float64Array(START);
  private sourceRow = new Int32Array(START);
  /** Made when the first plot with a row, column or plot identifier arrives. */
  private row: Float64Array | null = null;
  private col: Float64Array | null = null;
  private plotText: (string | null)[] | null = null;

  private readonly trials = new Numbering();
  private readonly treatments = new Numbering();
  private readonly blocks = new Numbering();

  addPlot(trialKey: string, treatment: string, block: string | null, row: number | null, col: number | null, plotId: string | null, sourceRow: number): number {
    const i = this.count++;
    if (i === this.sourceRow.length) this.grow();
    this.trial[i] = this.trials.id(trialKey);
    this.treatment[i] = this.treatments.id(treatment);
    this.block[i] = block === null ? -1 : this.blocks.id(block);
    this.value[i] = NaN;
    this.sourceRow[i] = sourceRow;
    if (row !== null) (this.row ??= nanFilled(this.sourceRow.length))[i] = row;
    else if (this.row) this.row[i] = NaN;
    if (col !== null) (this.col ??= nanFilled(this.sourceRow.length))[i] = col;
    else if (this.col) this.col[i] = NaN;
    if (plotId !== null) (this.plotText ??= new Array<string | null>(i).fill(null))[i] = plotId;
    else if (this.plotText) this.plotText[i] = null;
    return i;
  }

  plotAt(index: number): StoredPlot {
    const b = this.block[index];
    return { treatment: this.treatments.names[this.treatment[index]], block: b < 0 ? null : this.blocks.names[b], sourceRow: this.sourceRow[index] };
  }

  addObservation(plot: number, _trait: string, value: number | null): void {
    this.value[plot] = value === null ? NaN : value;
  }

  /** Each trial's plots (keyed by trial key), contiguous in one table, in file order within the trial. */
  plotsByTrial(): Map<string, PlotColumns> {
    const n = this.count;
    const nT = this.trials.names.length;
    const counts = new Int32Array(nT + 1);
    let sorted = true;
    for (let i = 0; i < n; i++) {
      counts[this.trial[i] + 1]++;
      if (i > 0 && this.trial[i] < this.trial[i - 1]) sorted = false;
    }
    for (let t = 0; t < nT; t++) counts[t + 1] += counts[t];
    const table = sorted ? this.tableInFileOrder() : this.tableGroupedByTrial(counts);
    const out = new Map<string, PlotColumns>();
    for (let t = 0; t < nT; t++) out.set(this.trials.names[t], { table, start: counts[t], count: counts[t + 1] - counts[t] });
    return out;
  }

  private tableInFileOrder(): PlotColumnTable {
    const n = this.count;
    return {
      treatmentCodes: this.treatments.names,
      treatment: this.treatment.subarray(0, n),
      blockLabels: this.blocks.names,
      block: this.block.subarray(0, n),
      value: this.value.subarray(0, n),
      row: this.row ? this.row.subarray(0, n) : null,
      col: this.col ? this.col.subarray(0, n) : null,
      plotText: this.plotText ? this.plotText.slice(0, n) : null,
      sourceRow: this.sourceRow.subarray(0, n),
    };
  }

  /** Stable counting sort by trial; `starts[t]` is trial t's first position. */
  private tableGroupedByTrial(starts: Int32Array): PlotColumnTable {
    const n = this.count;
    const next = Int32Array.from(starts);
    const order = new Int32Array(n);
    for (let i = 0; i < n; i++) order[next[this.trial[i]]++] = i;
    const ints = (a: Int32Array): Int32Array => Int32Array.from(order, (i) => a[i]);
    const reals = (a: Float64Array | null): Float64Array | null => (a ? Float64Array.from(order, (i) => a[i]) : null);
    const text = this.plotText;
    return {
      treatmentCodes: this.treatments.names,
      treatment: ints(this.treatment),
      blockLabels: this.blocks.names,
      block: ints(this.block),
      value: reals(this.value)!,
      row: reals(this.row),
      col: reals(this.col),
      plotText: text ? Array.from(order, (i) => text[i]) : null,
      sourceRow: ints(this.sourceRow),
    };
  }

  private grow(): void {
    const size = this.sourceRow.length * 2;
    this.trial = grownInts(this.trial, size);
    this.treatment = grownInts(this.treatment, size);
    this.block = grownInts(this.block, size);
    this.sourceRow = grownInts(this.sourceRow, size);
    this.value = grownReals(this.value, size);
    if (this.row) this.row = grownReals(this.row, size);
    if (this.col) this.col = grownReals(this.col, size);
  }
}

/**
 * Strings numbered 0, 1, ... in order of first appearance. Files are usually sorted by trial and
 * the builder hands over one string per code and block, so a one-entry cache spares most lookups.
 */
class Numbering {
  readonly names: string[] = [];
  private readonly ids = new Map<string, number>();
  private last: string | null = null;
  private lastId = -1;

  id(name: string): number {
    if (name === this.last) return this.lastId;
    let id = this.ids.get(name);
    if (id === undefined) {
      id = this.names.length;
      this.names.push(name);
      this.ids.set(name, id);
    }
    this.last = name;
    return (this.lastId = id);
  }
}

function grownInts(a: Int32Array, size: number): Int32Array<ArrayBuffer> {
  const b = new Int32Array(size);
  b.set(a);
  return b;
}

function grownReals(a: Float64Array, size: number): Float64Array<ArrayBuffer> {
  const b = new Float64Array(size);
  b.set(a);
  return b;
}

function nanFilled(size: number): Float64Array {
  return new Float64Array(size).fill(NaN);
}
