// Splits a trial's plots into those analysed, those missing (no value) and those a user
// excluded (with the recorded reason), and checks each analysed plot has what the design needs.
import type { PlotObservation, TrialInput, TreatmentInfo } from '../types.js';
import type { ExcludedPlot } from './types.js';
import { TrialInputError } from './errors.js';

export interface UsedPlot extends PlotObservation {
  readonly value: number;
}

export interface PlotSplit {
  readonly used: readonly UsedPlot[];
  readonly missing: readonly { readonly plotId: string | number | null; readonly label: string | null; readonly treatment: string }[];
  readonly excluded: readonly ExcludedPlot[];
}

export function splitPlots(trial: TrialInput, treatments: readonly TreatmentInfo[]): PlotSplit {
  const known = new Set(treatments.map((t) => t.code));
  const used: UsedPlot[] = [];
  const missing: { plotId: string | number | null; label: string | null; treatment: string }[] = [];
  const excluded: ExcludedPlot[] = [];
  for (const plot of trial.plots) {
    const id = plot.plotId ?? null;
    // Errors name the plot as the user knows it: the field's label where there is one.
    const shown = plot.label ?? id;
    if (!known.has(plot.treatment)) throw new TrialInputError(trial.trial, `treatment "${plot.treatment}" is not in the protocol (known: ${[...known].join(', ')})`, shown);
    if (plot.excluded) {
      excluded.push({ plotId: id, label: plot.label ?? null, treatment: plot.treatment, reason: plot.excluded.reason });
      continue;
    }
    if (plot.value === null) {
      missing.push({ plotId: id, label: plot.label ?? null, treatment: plot.treatment });
      continue;
    }
    if (!Number.isFinite(plot.value)) throw new TrialInputError(trial.trial, `value ${plot.value} is not a finite number`, shown);
    requireLayout(trial, plot, shown);
    used.push(plot as UsedPlot);
  }
  return { used, missing, excluded };
}

function requireLayout(trial: TrialInput, plot: PlotObservation, id: string | number | null): void {
  if (trial.design === 'randomised-blocks' && (plot.block === null || plot.block === ''))
    throw new TrialInputError(trial.trial, 'a randomised-blocks trial needs a block for every analysed plot', id);
  if ((trial.design === 'latin-square' || trial.design === 'row-column') && (plot.row === null || plot.col === null))
    throw new TrialInputError(trial.trial, `a ${trial.design} trial needs a row and a column for every analysed plot`, id);
}
