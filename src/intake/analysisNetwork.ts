// A validated table's trials, protocol and plots as the engine's network for one trait: the
// one place that decides how a file's trials become TrialInputs, whichever path read the plots.
import type { FactorInfo, NetworkInput, PlotObservation, TreatmentInfo, TrialInput } from '../engine/types.js';
import { trialOverColumns, type PlotColumns } from '../engine/plotColumns.js';
import type { ParsedTrait, ParsedTrial } from './types.js';

/** The parts of a ParsedPlotTable (or a builder's summary) a network needs besides its plots. */
export interface NetworkParts {
  readonly control: string | null;
  readonly factors: readonly FactorInfo[];
  readonly treatments: readonly TreatmentInfo[];
  readonly trials: readonly ParsedTrial[];
  readonly trialCovariates: Readonly<Record<string, Readonly<Record<string, number | string | null>>>>;
}

/** Trials without plots for the trait are left out; the rest keep file order. */
export function assembleNetwork(parts: NetworkParts, trait: ParsedTrait, plotsByTrial: ReadonlyMap<string, readonly PlotObservation[] | PlotColumns>): NetworkInput {
  const trials: TrialInput[] = [];
  for (const t of parts.trials) {
    const plots = plotsByTrial.get(t.key);
    if (plots === undefined) continue;
    const fields = { trial: t.key, site: t.site, year: t.year, design: t.design, covariates: parts.trialCovariates[t.key] ?? {}, ...(t.appliedLevels ? { appliedLevels: t.appliedLevels } : {}) };
    trials.push('table' in plots ? trialOverColumns(fields, plots) : { ...fields, plots });
  }
  return {
    trait: trait.name,
    traitKind: trait.kind,
    unit: trait.unit,
    factors: parts.factors,
    treatments: parts.treatments,
    control: parts.control ?? undefined,
    trials,
  };
}
