// One trial for the trial screen: every plot (excluded and missing ones too) with its value
// and, for plots in the fit, the residual diagnostics of the trial stage, beside the analysis.
import type { TrialAnalysis } from '../../engine/trial/types.js';
import type { TrialDesign } from '../../engine/types.js';
import { loadNetwork, openWorkspace } from '../../store/index.js';
import { ManyfieldError } from '../result.js';
import { runTrialStage, screenContrasts } from './trialStage.js';

export interface PlotDetail {
  readonly id: number;
  /** The field's own plot label (the file's plot column); the plot id as text when the file had none. */
  readonly label: string;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  readonly value: number | null;
  readonly excluded: boolean;
  readonly reason: string | null;
  /** Diagnostics of plots used in the fit; null for excluded and missing plots. */
  readonly fitted: number | null;
  readonly residual: number | null;
  /** Externally studentised (deleted) residual, the one flagged beyond ±3.5. */
  readonly studentised: number | null;
  readonly leverage: number | null;
  readonly cooks: number | null;
  readonly normalScore: number | null;
}

export interface TrialDetail {
  readonly trial: { readonly id: number; readonly label: string; readonly site: string; readonly year: number; readonly design: TrialDesign; readonly crop: string | null };
  readonly unit: string | null;
  readonly treatments: { readonly code: string; readonly label: string }[];
  readonly control: string | null;
  readonly plots: PlotDetail[];
  /** Null when the trial cannot be analysed (e.g. every plot excluded); analysisError says why. */
  readonly analysis: TrialAnalysis | null;
  readonly analysisError: string | null;
}

export function trialDetail(path: string, trialId: number, trait: string): TrialDetail {
  const ws = openWorkspace(path);
  try {
    const row = ws.db
      .prepare('SELECT t.id, t.label, s.code AS site, t.year, t.design, t.crop FROM trial t JOIN site s ON s.id = t.site_id WHERE t.id = ?')
      .get(trialId) as TrialDetail['trial'] | undefined;
    if (row === undefined) throw new ManyfieldError('not-found', `no trial with id ${trialId} in this workspace`, { trial: trialId });
    const network = loadNetwork(ws, trait, { trials: [trialId] });
    const trial = network.trials[0];
    const outcome = runTrialStage(trial, network, screenContrasts(network));
    const diagnostics = new Map((outcome.analysis?.diagnostics.plots ?? []).map((d) => [d.plotId, d]));
    const plots = trial.plots.map((p): PlotDetail => {
      const id = p.plotId as number; // the store always sets the plot's integer id
      const d = diagnostics.get(id);
      return {
        id,
        label: p.label ?? String(id),
        treatment: p.treatment,
        block: p.block,
        row: p.row,
        col: p.col,
        value: p.value,
        excluded: Boolean(p.excluded),
        reason: p.excluded ? p.excluded.reason : null,
        fitted: d?.fitted ?? null,
        residual: d?.residual ?? null,
        studentised: d?.studentized ?? null,
        leverage: d?.leverage ?? null,
        cooks: d?.cooksDistance ?? null,
        normalScore: d?.normalScore ?? null,
      };
    });
    return {
      trial: row,
      unit: network.unit ?? null,
      treatments: network.treatments.map((t) => ({ code: t.code, label: t.label ?? t.code })),
      control: network.control ?? null,
      plots,
      analysis: outcome.analysis,
      analysisError: outcome.error,
    };
  } finally {
    ws.close();
  }
}
