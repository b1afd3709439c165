// Per-trial results of saved analyses (migration 0004): one analysis_trial row per trial with
// the trial's compact result and the SHA-256 of its data as analysed, so a screen can page
// through thousands of trials, open one, and have its per-plot detail recomputed and checked.
// Analyses saved before that table hold their trials inside the 'twoStage' result row; they are
// read from there, as they are.
import { createHash } from 'node:crypto';
import { ManyfieldError } from '../api/result.js';
import type { NetworkInput, TrialInput } from '../engine/types.js';
import { isFullTrialAnalysis, summariseTrial } from '../engine/trial/trialSummary.js';
import type { Workspace } from './workspace.js';
import { decodeStoredJson, encodeStoredJson } from './storedJson.js';

/** A trial entry as a report carries it: the full analysis, its summary, or a summary-file row. */
export type StoredTrialEntry = { readonly trial: string } & object;

/** The SHA-256 of one trial's data as the engine received it (plots, design, covariates). */
export function trialDataSha256(trial: TrialInput): string {
  return createHash('sha256').update(JSON.stringify(trial)).digest('hex');
}

/** The compact form kept for a trial (full analyses are summarised; other entries kept as given); `sharedMeanings` as for summariseTrial. */
export function storedTrialSummary(entry: StoredTrialEntry, sharedMeanings?: ReadonlyMap<string, string>): object {
  return isFullTrialAnalysis(entry) ? summariseTrial(entry, sharedMeanings) : entry;
}

/** Insert the trial rows of analysis `analysisId` (inside the caller's transaction). */
export function insertAnalysisTrials(ws: Workspace, analysisId: number, trials: readonly StoredTrialEntry[], network?: NetworkInput): void {
  const inputs = new Map(network?.trials.map((t) => [t.trial, t]) ?? []);
  const insert = ws.db.prepare('INSERT INTO analysis_trial (analysis_id, position, trial, data_sha256, summary_json) VALUES (?, ?, ?, ?, ?)');
  trials.forEach((entry, position) => {
    const input = inputs.get(entry.trial);
    insert.run(analysisId, position, entry.trial, input ? trialDataSha256(input) : null, encodeStoredJson(storedTrialSummary(entry)));
  });
}

export interface AnalysisTrialRow {
  readonly position: number;
  readonly trial: string;
  readonly dataSha256: string | null;
  readonly summary: unknown;
}

/** Whether the analysis keeps its trials in analysis_trial rows (saved after migration 0004). */
export function hasTrialRows(ws: Workspace, analysisId: number): boolean {
  return ws.db.prepare('SELECT 1 FROM analysis_trial WHERE analysis_id = ? LIMIT 1').get(analysisId) !== undefined;
}

export function countAnalysisTrials(ws: Workspace, analysisId: number): number {
  return (ws.db.prepare('SELECT count(*) AS n FROM analysis_trial WHERE analysis_id = ?').get(analysisId) as { n: number }).n;
}

/** A page of trial rows in report order. */
export function listAnalysisTrials(ws: Workspace, analysisId: number, offset = 0, limit = -1): AnalysisTrialRow[] {
  const rows = ws.db
    .prepare('SELECT position, trial, data_sha256, summary_json FROM analysis_trial WHERE analysis_id = ? ORDER BY position LIMIT ? OFFSET ?')
    .raw()
    .all(analysisId, limit, offset) as [number, string, string | null, string | Uint8Array][];
  return rows.map(([position, trial, dataSha256, json]) => ({ position, trial, dataSha256, summary: decodeStoredJson(json) }));
}

export function findAnalysisTrial(ws: Workspace, analysisId: number, trial: string): AnalysisTrialRow | null {
  const row = ws.db.prepare('SELECT position, trial, data_sha256, summary_json FROM analysis_trial WHERE analysis_id = ? AND trial = ?').raw().get(analysisId, trial) as
    | [number, string, string | null, string | Uint8Array]
    | undefined;
  return row ? { position: row[0], trial: row[1], dataSha256: row[2], summary: decodeStoredJson(row[3]) } : null;
}

/** The id of the workspace trial with this label, or a not-found error naming it. */
export function trialIdByLabel(ws: Workspace, label: string): number {
  const row = ws.db.prepare('SELECT id FROM trial WHERE label = ?').get(label) as { id: number } | undefined;
  if (!row) throw new ManyfieldError('not-found', `trial "${label}" is no longer in this workspace`, { trial: label });
  return row.id;
}
