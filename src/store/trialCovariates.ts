// Every trial's covariates as the analyses see them (site values, overridden by the trial's own
// of the same name), without loading any plot: for moderator plots on the screens.
import { levelFromColumns, type StoredLevel } from './levels.js';
import type { Workspace } from './workspace.js';

export interface TrialCovariates {
  readonly trial: string;
  readonly covariates: Record<string, number | string | null>;
}

export function listTrialCovariates(ws: Workspace): TrialCovariates[] {
  const trials = ws.db.prepare('SELECT id, label, site_id FROM trial ORDER BY label').all() as { id: number; label: string; site_id: number }[];
  const collect = (sql: string) => {
    const out = new Map<number, Record<string, number | string | null>>();
    for (const r of ws.db.prepare(sql).all() as (StoredLevel & { owner: number; name: string })[]) {
      const rec = out.get(r.owner) ?? {};
      rec[r.name] = levelFromColumns(r);
      out.set(r.owner, rec);
    }
    return out;
  };
  const bySite = collect('SELECT site_id AS owner, name, value_num, value_text FROM site_covariate');
  const byTrial = collect('SELECT trial_id AS owner, name, value_num, value_text FROM trial_covariate');
  return trials.map((t) => ({ trial: t.label, covariates: { ...bySite.get(t.site_id), ...byTrial.get(t.id) } }));
}
