// Read-side summaries of a workspace: the trial list and row counts.
import type { TrialDesign } from '../engine/types.js';
import type { Workspace } from './workspace.js';

export interface TrialListing {
  readonly id: number;
  /** The trial's workspace-wide name (its key in the file unless that was taken). */
  readonly label: string;
  readonly site: string;
  readonly year: number;
  readonly design: TrialDesign;
  readonly plots: number;
  readonly treatments: number;
  /** Traits with at least one non-missing value in the trial, by name. */
  readonly traits: string[];
}

export function listTrials(ws: Workspace): TrialListing[] {
  const rows = ws.db
    .prepare(
      `SELECT t.id, t.label, s.code AS site, t.year, t.design,
              COUNT(p.id) AS plots, COUNT(DISTINCT p.treatment_id) AS treatments
       FROM trial t JOIN site s ON s.id = t.site_id LEFT JOIN plot p ON p.trial_id = t.id
       GROUP BY t.id ORDER BY s.code, t.year, t.label`,
    )
    .all() as Omit<TrialListing, 'traits'>[];
  const traits = new Map<number, string[]>();
  const pairs = ws.db
    .prepare(
      `SELECT DISTINCT p.trial_id AS trial, tr.name FROM plot p
       JOIN observation o ON o.plot_id = p.id JOIN trait tr ON tr.id = o.trait_id
       WHERE o.value IS NOT NULL ORDER BY tr.name`,
    )
    .all() as { trial: number; name: string }[];
  for (const { trial, name } of pairs) {
    const list = traits.get(trial);
    if (list) list.push(name);
    else traits.set(trial, [name]);
  }
  return rows.map((r) => ({ ...r, traits: traits.get(r.id) ?? [] }));
}

export interface WorkspaceCounts {
  readonly sites: number;
  readonly trials: number;
  readonly plots: number;
  readonly observations: number;
  readonly importBatches: number;
}

export function counts(ws: Workspace): WorkspaceCounts {
  return ws.db
    .prepare(
      `SELECT (SELECT COUNT(*) FROM site) AS sites, (SELECT COUNT(*) FROM trial) AS trials,
              (SELECT COUNT(*) FROM plot) AS plots, (SELECT COUNT(*) FROM observation) AS observations,
              (SELECT COUNT(*) FROM import_batch) AS importBatches`,
    )
    .get() as WorkspaceCounts;
}
