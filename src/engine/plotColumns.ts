// A trial's plots held column by column. Reading a large file into one object per plot made
// the garbage collector copy every plot (twice) while the file was read; the analysis path keeps
// the plots of the whole file in a few typed arrays instead, and each trial points at its run
// of them. The object form (TrialInput.plots) is built from the columns on first use only, so
// the one-stage engine, which reads the columns directly, never builds it.
import type { PlotObservation, TrialInput } from './types.js';

/** The plots of a whole file, grouped by trial (each trial's plots contiguous, in file order). */
export interface PlotColumnTable {
  /** Treatment code per treatment id. */
  readonly treatmentCodes: readonly string[];
  /** Treatment id per plot. */
  readonly treatment: Int32Array;
  /** Block label per block id. */
  readonly blockLabels: readonly string[];
  /** Block id per plot; -1 = no block. */
  readonly block: Int32Array;
  /** Response per plot on the stored scale; NaN = missing (intake never stores NaN as a value). */
  readonly value: Float64Array;
  /** Field row and column per plot (NaN = none); null when no plot has one. */
  readonly row: Float64Array | null;
  readonly col: Float64Array | null;
  /** The file's plot identifier per plot (null = none given); null when no plot has one. */
  readonly plotText: readonly (string | null)[] | null;
  /** Source row per plot: the plot's id where the file gives none. */
  readonly sourceRow: Int32Array;
}

/** One trial's run of plots in a table. */
export interface PlotColumns {
  readonly table: PlotColumnTable;
  readonly start: number;
  readonly count: number;
}

/** The object form of a trial's plots, exactly as a reader building objects would have made them. */
export function plotsFromColumns(c: PlotColumns): PlotObservation[] {
  const t = c.table;
  const out = new Array<PlotObservation>(c.count);
  for (let k = 0; k < c.count; k++) {
    const i = c.start + k;
    const b = t.block[i];
    const v = t.value[i];
    const row = t.row ? t.row[i] : NaN;
    const col = t.col ? t.col[i] : NaN;
    out[k] = {
      plotId: t.plotText?.[i] ?? t.sourceRow[i],
      label: t.plotText?.[i] ?? null,
      sourceRow: t.sourceRow[i],
      treatment: t.treatmentCodes[t.treatment[i]],
      block: b < 0 ? null : t.blockLabels[b],
      row: Number.isNaN(row) ? null : row,
      col: Number.isNaN(col) ? null : col,
      value: Number.isNaN(v) ? null : v,
    };
  }
  return out;
}

/**
 * A TrialInput over columns: `plots` is an own enumerable property built on first read (so
 * copies made with spread, JSON and structured clones see ordinary plots), while `plotColumns`
 * lives on the prototype, so a copy whose plots were changed (a transform, an exclusion) never
 * carries columns that no longer match them.
 */
export function trialOverColumns(fields: Omit<TrialInput, 'plots' | 'plotColumns'>, columns: PlotColumns): TrialInput {
  return new TrialOverColumns(fields, columns) as unknown as TrialInput;
}

class TrialOverColumns {
  readonly #columns: PlotColumns;
  #plots: PlotObservation[] | null = null;

  constructor(fields: Omit<TrialInput, 'plots' | 'plotColumns'>, columns: PlotColumns) {
    Object.assign(this, fields);
    this.#columns = columns;
    // one shared descriptor: no closure per trial
    Object.defineProperty(this, 'plots', PLOTS);
  }

  get plotColumns(): PlotColumns {
    return this.#columns;
  }

  plotsFromColumns(): PlotObservation[] {
    return (this.#plots ??= plotsFromColumns(this.#columns));
  }
}

const PLOTS: PropertyDescriptor = {
  enumerable: true,
  get(this: TrialOverColumns): PlotObservation[] {
    return this.plotsFromColumns();
  },
};
