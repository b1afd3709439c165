// The sink behind an analysis straight from a file with one row per plot: each plot becomes
// the engine's PlotObservation in its trial's list as soon as its value is validated, so a row
// allocates one object (the store's ParsedPlot/ParsedObservation pair is never built).
import type { PlotObservation } from '../engine/types.js';
import type { PlotSink, StoredPlot } from './plotSink.js';

export class TrialPlotsSink implements PlotSink {
  /** Trial key -> its plots, in file order. */
  readonly plotsByTrial = new Map<string, PlotObservation[]>();
  private readonly trialOrdinal = new Map<string, number>();
  private readonly trialLists: PlotObservation[][] = [];
  // Per plot index, for messages about later rows: its trial, its place in the trial's list and
  // its source row. Typed arrays live outside the JS heap, so the collector never copies them.
  private plotTrial: Int32Array = new Int32Array(1024);
  private plotPlace: Int32Array = new Int32Array(1024);
  private sourceRows: Int32Array = new Int32Array(1024);
  private count = 0;
  // The plot added last, waiting for its value (one value per plot in these files).
  private pendingIndex = -1;
  private pendingTreatment = '';
  private pendingBlock: string | null = null;
  private pendingRow: number | null = null;
  private pendingCol: number | null = null;
  private pendingId: string | number = 0;
  // Files are usually sorted by trial: one-entry cache of the last trial.
  private lastKey: string | null = null;
  private lastOrdinal = -1;

  addPlot(trialKey: string, treatment: string, block: string | null, row: number | null, col: number | null, plotId: string | null, sourceRow: number): number {
    if (this.pendingIndex >= 0) throw new Error('TrialPlotsSink: a plot was added before the previous plot had its value (files with a trait column need the plot-list path)');
    if (trialKey !== this.lastKey) {
      let ordinal = this.trialOrdinal.get(trialKey);
      if (ordinal === undefined) {
        ordinal = this.trialLists.length;
        const list: PlotObservation[] = [];
        this.trialLists.push(list);
        this.trialOrdinal.set(trialKey, ordinal);
        this.plotsByTrial.set(trialKey, list);
      }
      this.lastKey = trialKey;
      this.lastOrdinal = ordinal;
    }
    const index = this.count++;
    if (index === this.sourceRows.length) this.grow();
    this.plotTrial[index] = this.lastOrdinal;
    this.plotPlace[index] = this.trialLists[this.lastOrdinal].length;
    this.sourceRows[index] = sourceRow;
    this.pendingIndex = index;
    this.pendingTreatment = treatment;
    this.pendingBlock = block;
    this.pendingRow = row;
    this.pendingCol = col;
    // As networkFromTable names plots: the plot column, else the source row.
    this.pendingId = plotId ?? sourceRow;
    return index;
  }

  plotAt(index: number): StoredPlot {
    const p = this.trialLists[this.plotTrial[index]][this.plotPlace[index]];
    return { treatment: p.treatment, block: p.block, sourceRow: this.sourceRows[index] };
  }

  addObservation(plot: number, _trait: string, value: number | null): void {
    if (plot !== this.pendingIndex) throw new Error('TrialPlotsSink: a second value for one plot (files with a trait column need the plot-list path)');
    this.trialLists[this.plotTrial[plot]].push({ plotId: this.pendingId, treatment: this.pendingTreatment, block: this.pendingBlock, row: this.pendingRow, col: this.pendingCol, value });
    this.pendingIndex = -1;
  }

  private grow(): void {
    const size = this.sourceRows.length * 2;
    const bigger = (a: Int32Array): Int32Array => {
      const b = new Int32Array(size);
      b.set(a);
      return b;
    };
    this.plotTrial = bigger(this.plotTrial);
    this.plotPlace = bigger(this.plotPlace);
    this.sourceRows = bigger(this.sourceRows);
  }
}
