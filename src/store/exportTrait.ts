// One trait in long format, a row per plot, under column names that a mapping reads straight
// back (the returned mapping does exactly that), so import -> export -> import round-trips.
import type { LevelValue } from '../engine/types.js';
import type { ImportMapping } from '../intake/types.js';
import { levelFromColumns, type StoredLevel } from './levels.js';
import { findTrait, trialsWithTrait } from './network.js';
import { loadAppliedLevels } from './appliedLevels.js';
import type { Workspace } from './workspace.js';

export type ExportCell = string | number | null;

export interface ExportedTrait {
  readonly header: string[];
  readonly rows: ExportCell[][];
  /** A mapping that reads these columns back (values are in the stored canonical units). */
  readonly mapping: ImportMapping;
}

/** Column names must be distinct: a factor or covariate named like a fixed column gets a suffix. */
function uniqueName(taken: Set<string>, wanted: string): string {
  let name = wanted;
  for (let i = 2; taken.has(name); i++) name = `${wanted}_${i}`;
  taken.add(name);
  return name;
}

export function exportTrait(ws: Workspace, trait: string): ExportedTrait {
  const db = ws.db;
  const t = findTrait(ws, trait);
  const bounds = db.prepare('SELECT lower, upper FROM trait WHERE id = ?').get(t.id) as { lower: number | null; upper: number | null };
  const trials = trialsWithTrait(ws, t.id);
  const protocolIds = [...new Set(trials.map((r) => r.protocol_id))];

  const factors = db
    .prepare(`SELECT DISTINCT name, unit FROM factor WHERE protocol_id IN (${protocolIds.map(() => '?').join(',') || 'NULL'}) ORDER BY position, name`)
    .all(...protocolIds) as { name: string; unit: string | null }[];
  const factorNames = [...new Set(factors.map((f) => f.name))];
  const levels = new Map<number, Map<string, LevelValue>>();
  for (const r of db
    .prepare('SELECT l.treatment_id, f.name, l.value_num, l.value_text FROM treatment_level l JOIN factor f ON f.id = l.factor_id')
    .all() as (StoredLevel & { treatment_id: number; name: string })[]) {
    const m = levels.get(r.treatment_id) ?? new Map<string, LevelValue>();
    m.set(r.name, levelFromColumns(r));
    levels.set(r.treatment_id, m);
  }
  const covariateNames = (
    db
      .prepare(
        `SELECT DISTINCT c.name FROM trial_covariate c WHERE c.trial_id IN (SELECT value FROM json_each(?)) ORDER BY c.name`,
      )
      .all(JSON.stringify(trials.map((r) => r.id))) as { name: string }[]
  ).map((r) => r.name);
  const covariatesOf = db.prepare('SELECT name, value_num, value_text FROM trial_covariate WHERE trial_id = ?');

  // The field's plot labels go out when any exported plot has one, so exclusions by label work on the re-import.
  const hasLabels =
    db
      .prepare('SELECT 1 FROM plot p JOIN observation o ON o.plot_id = p.id AND o.trait_id = ? WHERE p.label IS NOT NULL AND p.trial_id IN (SELECT value FROM json_each(?)) LIMIT 1')
      .get(t.id, JSON.stringify(trials.map((r) => r.id))) !== undefined;
  const taken = new Set<string>();
  const fixed = ['site', 'year', 'trial', 'design', 'block', 'row', 'col', 'treatment', 'plot'].map((n) => uniqueName(taken, n));
  const plotCol = hasLabels ? fixed[8] : null;
  const factorCols = factorNames.map((n) => uniqueName(taken, n));
  const covariateCols = covariateNames.map((n) => uniqueName(taken, n));
  const valueCol = uniqueName(taken, t.name);
  const firstFactor = hasLabels ? 9 : 8;
  const header = [...fixed.slice(0, firstFactor), ...factorCols, ...covariateCols, valueCol];

  const plotsOf = db
    .prepare(
      `SELECT p.treatment_id, tm.code, p.block, p.row, p.col, o.value, p.label FROM plot p
       JOIN treatment tm ON tm.id = p.treatment_id
       JOIN observation o ON o.plot_id = p.id AND o.trait_id = ?
       WHERE p.trial_id = ? ORDER BY p.id`,
    )
    .raw();
  // Factor cells per treatment, worked out once rather than per plot.
  const factorCells = new Map<number, ExportCell[]>();
  for (const [id, lv] of levels) factorCells.set(id, factorNames.map((f) => lv.get(f) ?? null));
  const noLevels = factorNames.map(() => null);
  const width = header.length;
  const nFactors = factorNames.length;
  const nCovariates = covariateNames.length;
  const rows: ExportCell[][] = [];
  // A treatment applied at a site-specific amount is written with that trial's amount, so the
  // re-import stores the same amounts.
  const applied = loadAppliedLevels(db, trials.map((r) => r.id));
  for (const trial of trials) {
    const own = new Map(Object.entries(applied.get(trial.id) ?? {}));
    const cov = new Map((covariatesOf.all(trial.id) as (StoredLevel & { name: string })[]).map((c) => [c.name, levelFromColumns(c)]));
    const covCells = covariateNames.map((n) => cov.get(n) ?? null);
    for (const p of plotsOf.all(t.id, trial.id) as [number, string, string | null, number | null, number | null, number | null, string | null][]) {
      const amounts = own.get(p[1]);
      const planned = factorCells.get(p[0]) ?? noLevels;
      const f = amounts === undefined ? planned : planned.map((cell, i) => amounts[factorNames[i]] ?? cell);
      const row: ExportCell[] = new Array(width);
      row[0] = trial.site;
      row[1] = trial.year;
      row[2] = trial.label;
      row[3] = trial.design;
      row[4] = p[2];
      row[5] = p[3];
      row[6] = p[4];
      row[7] = p[1];
      if (hasLabels) row[8] = p[6];
      for (let i = 0; i < nFactors; i++) row[firstFactor + i] = f[i];
      for (let i = 0; i < nCovariates; i++) row[firstFactor + nFactors + i] = covCells[i];
      row[width - 1] = p[5];
      rows.push(row);
    }
  }

  const controls = protocolIds.length === 1
    ? (db.prepare('SELECT name, control_code FROM protocol WHERE id = ?').get(protocolIds[0]) as { name: string; control_code: string | null })
    : undefined;
  const factorUnits = Object.fromEntries(factors.filter((f) => f.unit !== null).map((f) => [f.name, f.unit as string]));
  const mapping: ImportMapping = {
    columns: {
      site: fixed[0],
      year: fixed[1],
      trial: fixed[2],
      design: fixed[3],
      block: fixed[4],
      row: fixed[5],
      col: fixed[6],
      treatment: fixed[7],
      ...(plotCol === null ? {} : { plot: plotCol }),
      response: valueCol,
      ...(factorNames.length ? { factors: Object.fromEntries(factorNames.map((f, i) => [f, factorCols[i]])) } : {}),
      ...(covariateNames.length ? { covariates: covariateCols } : {}),
    },
    trait: {
      name: t.name,
      unit: t.unit,
      kind: t.kind,
      ...(bounds.lower === null ? {} : { lower: bounds.lower }),
      ...(bounds.upper === null ? {} : { upper: bounds.upper }),
    },
    ...(Object.keys(factorUnits).length ? { factorUnits } : {}),
    ...(controls?.control_code ? { control: controls.control_code } : {}),
    ...(controls ? { protocol: controls.name } : {}),
  };
  return { header, rows, mapping };
}
