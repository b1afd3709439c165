// The sites of a workspace with their position, fixed covariates and the trials held there.
import { openWorkspace } from '../../store/index.js';

export interface SiteCovariate {
  readonly value: number | string;
  readonly unit: string | null;
}

export interface SiteEntry {
  readonly id: number;
  readonly code: string;
  readonly name: string;
  readonly region: string | null;
  readonly lat: number | null;
  readonly lon: number | null;
  /** Fixed site properties by name; a covariate stored as unknown is left out. */
  readonly covariates: Readonly<Record<string, SiteCovariate>>;
  readonly trials: number;
  readonly years: number[];
}

export function listSites(path: string): SiteEntry[] {
  const ws = openWorkspace(path);
  try {
    const db = ws.db;
    const rows = db.prepare('SELECT id, code, name, region, lat, lon FROM site ORDER BY code').all() as {
      id: number;
      code: string;
      name: string | null;
      region: string | null;
      lat: number | null;
      lon: number | null;
    }[];
    const covariates = new Map<number, Record<string, SiteCovariate>>();
    for (const c of db.prepare('SELECT site_id, name, value_num, value_text, unit FROM site_covariate ORDER BY name').all() as {
      site_id: number;
      name: string;
      value_num: number | null;
      value_text: string | null;
      unit: string | null;
    }[]) {
      const value = c.value_num ?? c.value_text;
      if (value === null) continue;
      const rec = covariates.get(c.site_id) ?? {};
      rec[c.name] = { value, unit: c.unit };
      covariates.set(c.site_id, rec);
    }
    const trialYears = new Map<number, number[]>();
    for (const t of db.prepare('SELECT site_id, year FROM trial ORDER BY year').all() as { site_id: number; year: number }[]) {
      const list = trialYears.get(t.site_id) ?? [];
      list.push(t.year);
      trialYears.set(t.site_id, list);
    }
    return rows.map((r) => {
      const years = trialYears.get(r.id) ?? [];
      return {
        id: r.id,
        code: r.code,
        name: r.name ?? r.code,
        region: r.region,
        lat: r.lat,
        lon: r.lon,
        covariates: covariates.get(r.id) ?? {},
        trials: years.length,
        years: [...new Set(years)],
      };
    });
  } finally {
    ws.close();
  }
}
