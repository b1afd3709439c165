// Site details that do not come with plot files: name, region, position and fixed covariates
// (soil pH, organic matter, long-term rainfall). loadNetwork merges the covariates into each
// trial at the site.
import { ManyfieldError } from '../api/result.js';
import type { Workspace } from './workspace.js';

export interface SiteDetails {
  readonly name?: string;
  readonly region?: string | null;
  readonly lat?: number | null;
  readonly lon?: number | null;
  /** name -> value (number or label; null removes nothing, it stores "unknown"). */
  readonly covariates?: Readonly<Record<string, number | string | null>>;
  /** Units of the covariates, by name. */
  readonly units?: Readonly<Record<string, string>>;
}

/** Create the site if new, then set the given details; covariates are upserted by name. */
export function setSiteDetails(ws: Workspace, code: string, details: SiteDetails): number {
  if (code.length === 0) throw new ManyfieldError('invalid-argument', 'a site needs a code');
  const db = ws.db;
  const run = db.transaction((): number => {
    db.prepare('INSERT INTO site (code, name) VALUES (?, ?) ON CONFLICT (code) DO NOTHING').run(code, details.name ?? code);
    const id = (db.prepare('SELECT id FROM site WHERE code = ?').get(code) as { id: number }).id;
    if (details.name !== undefined) db.prepare('UPDATE site SET name = ? WHERE id = ?').run(details.name, id);
    if (details.region !== undefined) db.prepare('UPDATE site SET region = ? WHERE id = ?').run(details.region, id);
    if (details.lat !== undefined) db.prepare('UPDATE site SET lat = ? WHERE id = ?').run(details.lat, id);
    if (details.lon !== undefined) db.prepare('UPDATE site SET lon = ? WHERE id = ?').run(details.lon, id);
    const upsert = db.prepare(
      `INSERT INTO site_covariate (site_id, name, value_num, value_text, unit) VALUES (?, ?, ?, ?, ?)
       ON CONFLICT (site_id, name) DO UPDATE SET value_num = excluded.value_num, value_text = excluded.value_text, unit = excluded.unit`,
    );
    for (const [name, value] of Object.entries(details.covariates ?? {})) {
      upsert.run(id, name, typeof value === 'number' ? value : null, typeof value === 'string' ? value : null, details.units?.[name] ?? null);
    }
    return id;
  });
  return run.immediate();
}
