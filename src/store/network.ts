// Rows -> the engine's NetworkInput for one trait: the trials that measured it, their plots
// (excluded ones flagged with the reason), the protocol's factors and treatments, and the
// site and trial covariates merged (a trial value overrides a site value of the same name).
import { ManyfieldError } from '../api/result.js';
import type { FactorInfo, LevelValue, NetworkInput, PlotObservation, TreatmentInfo, TrialDesign, TrialInput } from '../engine/types.js';
import { levelFromColumns, type StoredLevel } from './levels.js';
import { loadAppliedLevels } from './appliedLevels.js';
import type { Workspace } from './workspace.js';

export interface LoadNetworkOptions {
  /** Trial ids to include; default every trial with values of the trait. */
  readonly trials?: readonly number[];
}

interface TraitRow {
  id: number;
  name: string;
  unit: string;
  kind: 'continuous' | 'percent' | 'count';
}

interface TrialRow {
  id: number;
  label: string;
  site: string;
  site_id: number;
  year: number;
  design: TrialDesign;
  protocol_id: number;
}

export function findTrait(ws: Workspace, name: string): TraitRow {
  const row = ws.db.prepare('SELECT id, name, unit, kind FROM trait WHERE name = ?').get(name) as TraitRow | undefined;
  if (row) return row;
  const known = (ws.db.prepare('SELECT name FROM trait ORDER BY name').all() as { name: string }[]).map((r) => `"${r.name}"`);
  throw new ManyfieldError('not-found', `no trait "${name}" in this workspace; it holds ${known.length ? known.join(', ') : 'no traits yet'}`, { trait: name });
}

/** Trials holding at least one observation row of the trait, in site, year, label order. */
export function trialsWithTrait(ws: Workspace, traitId: number, only?: readonly number[]): TrialRow[] {
  // A few named trials (one trial's detail) are looked up by id, not by scanning every trial.
  const named = only !== undefined && only.length <= 100;
  const rows = ws.db
    .prepare(
      `SELECT t.id, t.label, s.code AS site, t.site_id, t.year, t.design, t.protocol_id
       FROM trial t JOIN site s ON s.id = t.site_id
       WHERE ${named ? `t.id IN (${only.map(() => '?').join(', ') || 'NULL'}) AND ` : ''}EXISTS (SELECT 1 FROM plot p JOIN observation o ON o.plot_id = p.id AND o.trait_id = ? WHERE p.trial_id = t.id)
       ORDER BY s.code, t.year, t.label`,
    )
    .all(...(named ? only : []), traitId) as TrialRow[];
  if (only === undefined) return rows;
  const byId = new Map(rows.map((r) => [r.id, r]));
  return only.map((id) => {
    const r = byId.get(id);
    if (r) return r;
    const exists = ws.db.prepare('SELECT 1 FROM trial WHERE id = ?').get(id) !== undefined;
    throw new ManyfieldError(exists ? 'invalid-argument' : 'not-found', exists ? `trial ${id} has no values of this trait` : `no trial with id ${id} in this workspace`, { trial: id });
  });
}

export function loadProtocol(ws: Workspace, protocolId: number): { factors: FactorInfo[]; treatments: TreatmentInfo[]; control: string | null } {
  const db = ws.db;
  const factorRows = db.prepare('SELECT id, name, kind, unit FROM factor WHERE protocol_id = ? ORDER BY position').all(protocolId) as {
    id: number;
    name: string;
    kind: 'numeric' | 'categorical';
    unit: string | null;
  }[];
  const factors: FactorInfo[] = factorRows.map((f) => (f.unit === null ? { name: f.name, kind: f.kind } : { name: f.name, kind: f.kind, unit: f.unit }));
  const levels = new Map<number, Record<string, LevelValue>>();
  const treatmentRows = db.prepare('SELECT id, code, label FROM treatment WHERE protocol_id = ? ORDER BY id').all(protocolId) as {
    id: number;
    code: string;
    label: string | null;
  }[];
  for (const t of treatmentRows) levels.set(t.id, Object.fromEntries(factors.map((f) => [f.name, null])));
  const levelRows = db
    .prepare(
      `SELECT l.treatment_id, f.name, l.value_num, l.value_text FROM treatment_level l JOIN factor f ON f.id = l.factor_id
       WHERE f.protocol_id = ?`,
    )
    .all(protocolId) as (StoredLevel & { treatment_id: number; name: string })[];
  for (const r of levelRows) {
    const rec = levels.get(r.treatment_id);
    if (rec) rec[r.name] = levelFromColumns(r);
  }
  const treatments: TreatmentInfo[] = treatmentRows.map((t) =>
    t.label === null ? { code: t.code, levels: levels.get(t.id)! } : { code: t.code, label: t.label, levels: levels.get(t.id)! },
  );
  const control = (db.prepare('SELECT control_code FROM protocol WHERE id = ?').get(protocolId) as { control_code: string | null }).control_code;
  return { factors, treatments, control };
}

type Covariates = Record<string, number | string | null>;

/** `only`: the trials (and their sites) whose covariates are needed; default all. */
function covariateMaps(ws: Workspace, only?: readonly TrialRow[]): { bySite: Map<number, Covariates>; byTrial: Map<number, Covariates> } {
  const within = (column: string, ids: readonly number[] | undefined): string => (ids === undefined ? '' : ` WHERE ${column} IN (${ids.map(Number).join(', ') || 'NULL'})`);
  const collect = (sql: string): Map<number, Covariates> => {
    const out = new Map<number, Covariates>();
    for (const r of ws.db.prepare(sql).all() as (StoredLevel & { owner: number; name: string })[]) {
      const rec = out.get(r.owner) ?? {};
      rec[r.name] = levelFromColumns(r);
      out.set(r.owner, rec);
    }
    return out;
  };
  return {
    bySite: collect(`SELECT site_id AS owner, name, value_num, value_text FROM site_covariate${within('site_id', only?.map((t) => t.site_id))}`),
    byTrial: collect(`SELECT trial_id AS owner, name, value_num, value_text FROM trial_covariate${within('trial_id', only?.map((t) => t.id))}`),
  };
}

export function loadNetwork(ws: Workspace, trait: string, options: LoadNetworkOptions = {}): NetworkInput {
  const t = findTrait(ws, trait);
  const trialRows = trialsWithTrait(ws, t.id, options.trials);
  const protocols = new Set(trialRows.map((r) => r.protocol_id));
  if (protocols.size > 1) {
    throw new ManyfieldError('invalid-argument', `the trials measuring "${trait}" follow ${protocols.size} different protocols; choose trials of one protocol`, {
      protocols: [...protocols],
    });
  }
  const protocol = protocols.size === 1 ? loadProtocol(ws, [...protocols][0]) : { factors: [], treatments: [], control: null };
  const { bySite, byTrial } = covariateMaps(ws, options.trials !== undefined && options.trials.length <= 100 ? trialRows : undefined);
  // Raw rows (arrays) halve the objects built for a large network.
  const plotsOf = ws.db
    .prepare(
      `SELECT p.id, tm.code, p.block, p.row, p.col, p.excluded, p.exclusion_reason, o.value, p.label, p.source_row
       FROM plot p JOIN treatment tm ON tm.id = p.treatment_id
       LEFT JOIN observation o ON o.plot_id = p.id AND o.trait_id = ?
       WHERE p.trial_id = ? ORDER BY p.id`,
    )
    .raw();
  // Amounts applied per trial (a treatment coded by level number), as the file path builds them.
  const applied = loadAppliedLevels(ws.db, trialRows.map((r) => r.id));
  type PlotRow = [number, string, string | null, number | null, number | null, number, string | null, number | null, string | null, number | null];
  const trials: TrialInput[] = trialRows.map((r) => {
    const rows = plotsOf.all(t.id, r.id) as PlotRow[];
    const plots: PlotObservation[] = new Array(rows.length);
    for (let i = 0; i < rows.length; i++) {
      const p = rows[i];
      plots[i] = { plotId: p[0], label: p[8], sourceRow: p[9], treatment: p[1], block: p[2], row: p[3], col: p[4], value: p[7], excluded: p[5] ? { reason: p[6] ?? '' } : null };
    }
    const covariates = { ...bySite.get(r.site_id), ...byTrial.get(r.id) };
    const own = applied.get(r.id);
    return { trial: r.label, site: r.site, year: r.year, design: r.design, plots, covariates, ...(own ? { appliedLevels: own } : {}) };
  });
  return {
    trait: t.name,
    traitKind: t.kind,
    unit: t.unit,
    factors: protocol.factors,
    treatments: protocol.treatments,
    ...(protocol.control === null ? {} : { control: protocol.control }),
    trials,
  };
}
