// Recording, undoing and listing plot exclusions. A plot is never deleted: it is set aside
// with the user's reason, and every analysis reads the flag and the reason from the store.
import { excludePlot, includePlot, openWorkspace } from '../../store/index.js';
import { ManyfieldError } from '../result.js';

export interface ExclusionRecord {
  readonly plot: number;
  readonly excluded: true;
  readonly reason: string;
}

export interface InclusionRecord {
  readonly plot: number;
  readonly excluded: false;
}

export interface ExclusionEntry {
  readonly plot: number;
  /** The field's own plot label; the plot id as text when the file had none. */
  readonly label: string;
  readonly trial: number;
  readonly trialLabel: string;
  readonly reason: string;
}

export function excludeStoredPlot(path: string, plot: number, reason: string): ExclusionRecord {
  const ws = openWorkspace(path);
  try {
    excludePlot(ws, plot, reason);
    return { plot, excluded: true, reason: reason.trim() };
  } finally {
    ws.close();
  }
}

export function includeStoredPlot(path: string, plot: number): InclusionRecord {
  const ws = openWorkspace(path);
  try {
    const row = ws.db.prepare('SELECT excluded FROM plot WHERE id = ?').get(plot) as { excluded: number } | undefined;
    if (row === undefined) throw new ManyfieldError('not-found', `no plot with id ${plot} in this workspace`, { plot });
    if (row.excluded === 0) throw new ManyfieldError('conflict', `plot ${plot} is not excluded; nothing to undo`, { plot });
    includePlot(ws, plot);
    return { plot, excluded: false };
  } finally {
    ws.close();
  }
}

export function listExclusions(path: string): ExclusionEntry[] {
  const ws = openWorkspace(path);
  try {
    const rows = ws.db
      .prepare(
        `SELECT p.id AS plot, p.label AS label, p.trial_id AS trial, t.label AS trialLabel, p.exclusion_reason AS reason
         FROM plot p JOIN trial t ON t.id = p.trial_id JOIN site s ON s.id = t.site_id
         WHERE p.excluded = 1 ORDER BY s.code, t.year, t.label, p.id`,
      )
      .all() as { plot: number; label: string | null; trial: number; trialLabel: string; reason: string }[];
    return rows.map((r) => ({ plot: r.plot, label: r.label ?? String(r.plot), trial: r.trial, trialLabel: r.trialLabel, reason: r.reason }));
  } finally {
    ws.close();
  }
}
