// Engine-facing data shapes. The engine never reads files or the workspace: intake and the
// store turn their sources into these plain values.
import type { PlotColumns } from './plotColumns.js';

/** How the plots of a trial were laid out; decides the stage-1 model. */
export type TrialDesign = 'completely-randomised' | 'randomised-blocks' | 'latin-square' | 'row-column';

/** A factor level: a number (numeric factor), a label (categorical) or null ("not applicable"). */
export type LevelValue = number | string | null;

export interface FactorInfo {
  readonly name: string;
  readonly kind: 'numeric' | 'categorical';
  readonly unit?: string;
}

export interface TreatmentInfo {
  readonly code: string;
  readonly label?: string;
  /** Level per factor name; null where the factor does not apply (the control's timing). */
  readonly levels: Readonly<Record<string, LevelValue>>;
}

export interface PlotObservation {
  /** Identity within the source: the workspace's plot id, or the file's plot label / row. */
  readonly plotId?: string | number;
  /** The field's own plot label (the file's plot column), when it had one. */
  readonly label?: string | null;
  /** Row of the plot's (first) line in its file, as a spreadsheet numbers it. */
  readonly sourceRow?: number | null;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  /** Response on the stored (canonical) scale; null = missing plot. */
  readonly value: number | null;
  /** Set when a user excluded the plot, with the reason recorded. */
  readonly excluded?: { readonly reason: string } | null;
}

export interface TrialInput {
  readonly trial: string;
  readonly site?: string;
  readonly year?: number;
  readonly design: TrialDesign;
  readonly plots: readonly PlotObservation[];
  /**
   * The same plots column by column, when the trial was read that way (plotColumns.ts). Not
   * enumerable: copies of the trial drop it, and engines that can read columns use it when present.
   */
  readonly plotColumns?: PlotColumns;
  /**
   * Numeric levels applied in this trial where they differ from the treatment's level in the
   * protocol (a treatment coded by level number, with a site-specific amount): code -> factor ->
   * amount. Trends and rate responses use these.
   */
  readonly appliedLevels?: Readonly<Record<string, Readonly<Record<string, number>>>>;
  /** Trial-level covariates (soil pH, rainfall, previous crop ...) for meta-regression. */
  readonly covariates?: Readonly<Record<string, number | string | null>>;
}

export interface NetworkInput {
  readonly trait: string;
  readonly traitKind?: 'continuous' | 'percent' | 'count';
  readonly unit?: string;
  readonly factors: readonly FactorInfo[];
  readonly treatments: readonly TreatmentInfo[];
  readonly control?: string;
  readonly trials: readonly TrialInput[];
}
