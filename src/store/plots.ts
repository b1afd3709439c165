// Plot exclusions: a plot is never deleted, only set aside with the reason recorded. Plots are
// found by their workspace id (the screens) or by the field's own label within a trial (what a
// user types, and what stays the same in every workspace built from the same files).
import { ManyfieldError } from '../api/result.js';
import { didYouMean, listNames } from '../spec/closest.js';
import type { Workspace } from './workspace.js';

export function excludePlot(ws: Workspace, plotId: number, reason: string): void {
  const why = reason.trim();
  if (why.length === 0) throw new ManyfieldError('invalid-argument', 'excluding a plot needs a reason (for example "hail damage")');
  const info = ws.db.prepare('UPDATE plot SET excluded = 1, exclusion_reason = ? WHERE id = ?').run(why, plotId);
  if (info.changes === 0) throw new ManyfieldError('not-found', `no plot with id ${plotId} in this workspace`);
}

/** Undo an exclusion: the plot counts again. */
export function includePlot(ws: Workspace, plotId: number): void {
  const info = ws.db.prepare('UPDATE plot SET excluded = 0, exclusion_reason = NULL WHERE id = ?').run(plotId);
  if (info.changes === 0) throw new ManyfieldError('not-found', `no plot with id ${plotId} in this workspace`);
}

/** One plot as the screens show it: the field's label first, the workspace id for actions. */
export interface PlotRow {
  readonly id: number;
  /** The field's own plot label (the file's plot column); null when the file had none. */
  readonly label: string | null;
  /** Row of the plot's first line in the imported file. */
  readonly sourceRow: number | null;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  readonly excluded: boolean;
  readonly exclusionReason: string | null;
}

/** The plots of one trial (by trial id), in import order. */
export function listPlots(ws: Workspace, trialId: number): PlotRow[] {
  if (ws.db.prepare('SELECT 1 FROM trial WHERE id = ?').get(trialId) === undefined) throw new ManyfieldError('not-found', `no trial with id ${trialId} in this workspace`);
  const rows = ws.db
    .prepare(
      `SELECT p.id, p.label, p.source_row AS sourceRow, tm.code AS treatment, p.block, p.row, p.col, p.excluded, p.exclusion_reason AS exclusionReason
       FROM plot p JOIN treatment tm ON tm.id = p.treatment_id WHERE p.trial_id = ? ORDER BY p.id`,
    )
    .all(trialId) as (Omit<PlotRow, 'excluded'> & { excluded: number })[];
  return rows.map((r) => ({ ...r, excluded: r.excluded === 1 }));
}

/** The workspace id of the plot labelled `plotLabel` in the trial named `trialLabel`; errors list what exists. */
export function findPlotByLabel(ws: Workspace, trialLabel: string, plotLabel: string): number {
  const trial = ws.db.prepare('SELECT id FROM trial WHERE label = ?').get(trialLabel) as { id: number } | undefined;
  if (!trial) {
    const names = (ws.db.prepare('SELECT label FROM trial ORDER BY label').all() as { label: string }[]).map((r) => r.label);
    throw new ManyfieldError('not-found', `no trial "${trialLabel}" in this workspace; the trials are ${listNames(names)}${didYouMean(trialLabel, names)}`, { trial: trialLabel });
  }
  const hit = ws.db.prepare('SELECT id FROM plot WHERE trial_id = ? AND label = ?').get(trial.id, plotLabel) as { id: number } | undefined;
  if (hit) return hit.id;
  const labels = (ws.db.prepare('SELECT label FROM plot WHERE trial_id = ? AND label IS NOT NULL ORDER BY id').all(trial.id) as { label: string }[]).map((r) => r.label);
  if (labels.length === 0) {
    throw new ManyfieldError('not-found', `the plots of trial "${trialLabel}" have no labels (its file had no plot column); exclude by the plot's workspace id instead`, { trial: trialLabel, plot: plotLabel });
  }
  throw new ManyfieldError('not-found', `trial "${trialLabel}" has no plot labelled "${plotLabel}"; its plots are ${listNames(labels, 12)}${didYouMean(plotLabel, labels)}`, { trial: trialLabel, plot: plotLabel });
}

/** Exclude a plot named by the user's labels (trial label, plot label); returns its workspace id. */
export function excludePlotByLabel(ws: Workspace, trialLabel: string, plotLabel: string, reason: string): number {
  const id = findPlotByLabel(ws, trialLabel, plotLabel);
  excludePlot(ws, id, reason);
  return id;
}
