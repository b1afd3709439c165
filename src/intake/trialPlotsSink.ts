// The sink behind an analysis straight from a file with one row per plot: each plot becomes
// the engine's PlotObservation in its trial's list as soon as its value is validated, so a row
// allocates one object (the store's ParsedPlot/ParsedObservation pair is never built).
import type { PlotObservation } from '../engine/types.js';
import type { PlotSink, StoredPlot } from './plotSink.js';

export class TrialPlotsSink implements PlotSink {
  /** Trial key -> its plots, in file order. */
  readonly plotsByTrial = new Map<string, PlotObservation[]>();
  /** Every plot by index, for messages about later rows. */
  private readonly byIndex: PlotObservation[] = [];
  private readonly sourceRows: number[] = [];
  // The plot added last, waiting for its value (one value per plot in these files).
  private pendingIndex = -1;
  private pendingTrial: PlotObservation[] = [];
  private pendingTreatment = '';
  private pendingBlock: string | null = null;
  private pendingRow: number | null = null;
  private pendingCol: number | null = null;
  private pendingId: string | number = 0;
  // Files are usually sorted by trial: one-entry cache of the last trial's list.
  private lastKey: string | null = null;
  private lastList: PlotObservation[] = [];

  addPlot(trialKey: string, treatment: string, block: string | null, row: number | null, col: number | null, plotId: string | null, sourceRow: number): number {
    if (this.pendingIndex >= 0) throw new Error('TrialPlotsSink: a plot was added before the previous plot had its value (files with a trait column need the plot-list path)');
    if (trialKey !== this.lastKey) {
      let list = this.plotsByTrial.get(trialKey);
      if (list === undefined) this.plotsByTrial.set(trialKey, (list = []));
      this.lastKey = trialKey;
      this.lastList = list;
    }
    this.pendingIndex = this.sourceRows.length;
    this.sourceRows.push(sourceRow);
    this.pendingTrial = this.lastList;
    this.pendingTreatment = treatment;
    this.pendingBlock = block;
    this.pendingRow = row;
    this.pendingCol = col;
    // As networkFromTable names plots: the plot column, else the source row.
    this.pendingId = plotId ?? sourceRow;
    return this.pendingIndex;
  }

  plotAt(index: number): StoredPlot {
    const p = this.byIndex[index];
    return { treatment: p.treatment, block: p.block, sourceRow: this.sourceRows[index] };
  }

  addObservation(plot: number, _trait: string, value: number | null): void {
    if (plot !== this.pendingIndex) throw new Error('TrialPlotsSink: a second value for one plot (files with a trait column need the plot-list path)');
    const p: PlotObservation = { plotId: this.pendingId, treatment: this.pendingTreatment, block: this.pendingBlock, row: this.pendingRow, col: this.pendingCol, value };
    this.pendingTrial.push(p);
    this.byIndex.push(p);
    this.pendingIndex = -1;
  }
}
