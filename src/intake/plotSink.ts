// Where a PlotTableBuilder puts the plots and values it has validated. The builder owns every
// check; a sink only stores. Two sinks: the plot and observation lists the store imports
// (PlotListSink), and per-trial engine plots for an analysis straight from a file.
import type { ParsedObservation, ParsedPlot } from './types.js';

/** What the builder needs to know about an earlier plot to word a message about a later row. */
export interface StoredPlot {
  readonly treatment: string;
  readonly block: string | null;
  readonly sourceRow: number;
}

export interface PlotSink {
  /** Stores a new plot; returns its index (0, 1, 2 ... in the order plots are added). */
  addPlot(trialKey: string, treatment: string, block: string | null, row: number | null, col: number | null, plotId: string | null, sourceRow: number): number;
  /** A plot added before, for messages. */
  plotAt(index: number): StoredPlot;
  /** A validated value (canonical unit; null = missing) of one trait on plot `plot`. */
  addObservation(plot: number, trait: string, value: number | null): void;
}

/** The sink behind readPlotFile: a ParsedPlot per plot and a ParsedObservation per value. */
export class PlotListSink implements PlotSink {
  readonly plots: ParsedPlot[] = [];
  readonly observations: ParsedObservation[] = [];

  addPlot(trialKey: string, treatment: string, block: string | null, row: number | null, col: number | null, plotId: string | null, sourceRow: number): number {
    this.plots.push({ trialKey, treatment, block, row, col, plotId, sourceRow });
    return this.plots.length - 1;
  }

  plotAt(index: number): StoredPlot {
    return this.plots[index];
  }

  addObservation(plot: number, trait: string, value: number | null): void {
    this.observations.push({ plot, trait, value });
  }
}
