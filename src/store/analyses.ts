// Analyses are stored with their spec, the fingerprint of the data they saw and the build
// that ran them, so any reported number can be traced and reproduced.
import { ManyfieldError } from '../api/result.js';
import { APP_VERSION } from '../version.js';
import type { Workspace } from './workspace.js';
import { decodeStoredJson, encodeStoredJson } from './storedJson.js';
import type { NetworkInput } from '../engine/types.js';
import { compactPooled, isCompactPooled, type CompactPooledResult } from '../engine/pooling/compactPooled.js';
import type { PooledResult } from '../engine/pooling/types.js';
import { countAnalysisTrials, hasTrialRows, insertAnalysisTrials, listAnalysisTrials, type StoredTrialEntry } from './analysisTrials.js';

export type AnalysisStatus = 'running' | 'complete' | 'failed' | 'cancelled';

export interface SaveAnalysisOptions {
  readonly status?: AnalysisStatus;
  readonly appVersion?: string;
  readonly now?: () => Date;
  /** The data analysed: each trial's row then records the SHA-256 of its data, for detail on demand. */
  readonly network?: NetworkInput;
}

/**
 * The 'twoStage' result row of an analysis saved with per-trial rows: each pool's headline
 * numbers and the trial count. The pools' per-trial tables (weights, leave-one-out, influence,
 * cumulative; column by column) are the row POOLED_TABLES, and the one-stage model's per-trial
 * results the row ONE_STAGE_TRIALS, so a summary opens without reading them.
 */
interface StoredTwoStage {
  readonly pooled: readonly object[];
  readonly trialCount: number;
}

const POOLED_TABLES = 'twoStage.pooledTables';
const ONE_STAGE_TRIALS = 'oneStage.trials';

/** Put the split rows back into 'twoStage' and 'oneStage' (in place). */
function mergeSplitRows(results: Record<string, unknown>): void {
  const tables = results[POOLED_TABLES] as { weights: unknown; sensitivity: unknown }[] | undefined;
  if (tables !== undefined) {
    const twoStage = results.twoStage as StoredTwoStage;
    results.twoStage = { ...twoStage, pooled: twoStage.pooled.map((p, i) => ({ ...p, ...tables[i] })) };
    delete results[POOLED_TABLES];
  }
  const trials = results[ONE_STAGE_TRIALS];
  if (trials !== undefined) {
    results.oneStage = { ...(results.oneStage as object), trials };
    delete results[ONE_STAGE_TRIALS];
  }
}

/**
 * Store an analysis. Each own property of `results` (oneStage, twoStage, warnings ...) becomes
 * one analysis_result row of that kind, so parts can be read back without parsing the rest;
 * the trials of `twoStage` go to analysis_trial, one row per trial in compact form, and the
 * pools stay in the 'twoStage' row with their per-trial tables column by column.
 */
export function saveAnalysis(ws: Workspace, spec: unknown, fingerprint: string, results: object, options: SaveAnalysisOptions = {}): number {
  const specJson = JSON.stringify(spec);
  if (specJson === undefined) throw new ManyfieldError('invalid-argument', 'the analysis spec cannot be stored as JSON');
  const run = ws.db.transaction(() => {
    const id = Number(
      ws.db
        .prepare('INSERT INTO analysis (spec_json, data_fingerprint, app_version, created_at, status) VALUES (?, ?, ?, ?, ?)')
        .run(specJson, fingerprint, options.appVersion ?? APP_VERSION, (options.now?.() ?? new Date()).toISOString(), options.status ?? 'complete')
        .lastInsertRowid,
    );
    const insert = ws.db.prepare('INSERT INTO analysis_result (analysis_id, kind, payload_json) VALUES (?, ?, ?)');
    for (const [kind, payload] of Object.entries(results)) {
      if (payload === undefined || kind === 'detail') continue;
      if (kind === 'twoStage' && isTwoStageWithTrials(payload)) {
        insertAnalysisTrials(ws, id, payload.trials, options.network);
        const pooled = payload.pooled.map((p) => (isCompactPooled(p as PooledResult) ? (p as CompactPooledResult) : compactPooled(p as PooledResult)));
        const stored: StoredTwoStage = { pooled: pooled.map(({ weights: _w, sensitivity: _s, ...headline }) => headline), trialCount: payload.trials.length };
        insert.run(id, kind, encodeStoredJson(stored));
        insert.run(id, POOLED_TABLES, encodeStoredJson(pooled.map((p) => ({ weights: p.weights, sensitivity: p.sensitivity }))));
        continue;
      }
      if (kind === 'oneStage' && payload !== null && typeof payload === 'object' && Array.isArray((payload as { trials?: unknown }).trials)) {
        const { trials, ...headline } = payload as { trials: unknown[] };
        insert.run(id, kind, encodeStoredJson(headline));
        insert.run(id, ONE_STAGE_TRIALS, encodeStoredJson(trials));
        continue;
      }
      insert.run(id, kind, encodeStoredJson(payload));
    }
    return id;
  });
  return run.immediate();
}

export interface StoredAnalysis {
  readonly id: number;
  /** The user's name for it (migration 0005); absent or null until named. */
  readonly name?: string | null;
  readonly spec: unknown;
  readonly dataFingerprint: string;
  readonly appVersion: string;
  readonly createdAt: string;
  readonly status: AnalysisStatus;
  readonly results: Record<string, unknown>;
}

export function loadAnalysis(ws: Workspace, id: number): StoredAnalysis {
  const row = ws.db
    .prepare('SELECT id, spec_json, data_fingerprint, app_version, created_at, status FROM analysis WHERE id = ?')
    .get(id) as { id: number; spec_json: string; data_fingerprint: string; app_version: string; created_at: string; status: AnalysisStatus } | undefined;
  if (!row) throw new ManyfieldError('not-found', `no analysis with id ${id} in this workspace`);
  const results: Record<string, unknown> = {};
  for (const r of ws.db.prepare('SELECT kind, payload_json FROM analysis_result WHERE analysis_id = ? ORDER BY id').all(id) as { kind: string; payload_json: string | Uint8Array }[]) {
    results[r.kind] = decodeStoredJson(r.payload_json);
  }
  mergeSplitRows(results);
  // Saved with per-trial rows: put the trials back where the report had them.
  if (hasTrialRows(ws, id) && results.twoStage && typeof results.twoStage === 'object') {
    const { trialCount: _count, ...twoStage } = results.twoStage as StoredTwoStage;
    results.twoStage = { trials: listAnalysisTrials(ws, id).map((t) => t.summary), ...twoStage };
  }
  return {
    id: row.id,
    spec: JSON.parse(row.spec_json),
    dataFingerprint: row.data_fingerprint,
    appVersion: row.app_version,
    createdAt: row.created_at,
    status: row.status,
    results,
  };
}

function isTwoStageWithTrials(payload: unknown): payload is { trials: readonly StoredTrialEntry[]; pooled: readonly unknown[] } {
  return payload !== null && typeof payload === 'object' && Array.isArray((payload as { trials?: unknown }).trials) && Array.isArray((payload as { pooled?: unknown }).pooled);
}

export interface AnalysisListing {
  readonly id: number;
  /** The name the user gave the analysis (migration 0005); null until named. */
  readonly name: string | null;
  readonly trait: string | null;
  readonly dataFingerprint: string;
  readonly appVersion: string;
  readonly createdAt: string;
  readonly status: AnalysisStatus;
  readonly trials: number | null;
}

/** Every saved analysis, newest first, without its results. */
export function listAnalyses(ws: Workspace): AnalysisListing[] {
  const rows = ws.db
    .prepare(
      `SELECT a.id, a.name, a.spec_json, a.data_fingerprint, a.app_version, a.created_at, a.status,
              (SELECT payload_json FROM analysis_result r WHERE r.analysis_id = a.id AND r.kind = 'trialsAnalysed') AS trials
       FROM analysis a ORDER BY a.id DESC`,
    )
    .all() as { id: number; name: string | null; spec_json: string; data_fingerprint: string; app_version: string; created_at: string; status: AnalysisStatus; trials: string | Uint8Array | null }[];
  return rows.map((r) => {
    const spec = JSON.parse(r.spec_json) as { trait?: unknown };
    return {
      id: r.id,
      name: r.name,
      trait: typeof spec.trait === 'string' ? spec.trait : null,
      dataFingerprint: r.data_fingerprint,
      appVersion: r.app_version,
      createdAt: r.created_at,
      status: r.status,
      trials: r.trials === null ? null : Number(decodeStoredJson(r.trials)),
    };
  });
}

/**
 * A saved analysis without its per-trial results: spec, provenance, each pool's headline numbers,
 * the one-stage and rate results, with `twoStage.trialCount` in place of the trials. `tables`:
 * also the per-trial tables (pool weights, leave-one-out, influence, cumulative, column by column;
 * the one-stage model's per-trial results). An analysis saved before per-trial rows existed is
 * read as it is, its trials counted and left out.
 */
export function loadAnalysisSummary(ws: Workspace, id: number, options: { tables?: boolean } = {}): StoredAnalysis {
  const head = loadAnalysisHead(ws, id);
  const results: Record<string, unknown> = {};
  const rows = ws.db
    .prepare(`SELECT kind, payload_json FROM analysis_result WHERE analysis_id = ?${options.tables ? '' : ' AND kind NOT IN (?, ?)'} ORDER BY id`)
    .raw()
    .all(...(options.tables ? [id] : [id, POOLED_TABLES, ONE_STAGE_TRIALS])) as [string, string | Uint8Array][];
  for (const r of rows) results[r[0]] = decodeStoredJson(r[1]);
  mergeSplitRows(results);
  const twoStage = results.twoStage as { trials?: unknown[]; pooled?: unknown[]; trialCount?: number } | undefined;
  if (twoStage && Array.isArray(twoStage.trials)) {
    // saved before per-trial rows: the whole report is in this row
    const { trials, pooled } = twoStage;
    const compact = (pooled ?? []).map((p) => (isCompactPooled(p as PooledResult) ? (p as CompactPooledResult) : compactPooled(p as PooledResult)));
    results.twoStage = { pooled: options.tables ? compact : compact.map(({ weights: _w, sensitivity: _s, ...headline }) => headline), trialCount: trials.length };
    if (!options.tables && results.oneStage && typeof results.oneStage === 'object') {
      const { trials: _t, ...oneStage } = results.oneStage as { trials?: unknown };
      results.oneStage = oneStage;
    }
  } else if (twoStage && twoStage.trialCount === undefined) {
    results.twoStage = { ...twoStage, trialCount: countAnalysisTrials(ws, id) };
  }
  return { ...head, results };
}

export function loadAnalysisHead(ws: Workspace, id: number): Omit<StoredAnalysis, 'results'> {
  const row = ws.db
    .prepare('SELECT id, name, spec_json, data_fingerprint, app_version, created_at, status FROM analysis WHERE id = ?')
    .get(id) as { id: number; name: string | null; spec_json: string; data_fingerprint: string; app_version: string; created_at: string; status: AnalysisStatus } | undefined;
  if (!row) throw new ManyfieldError('not-found', `no analysis with id ${id} in this workspace`);
  return { id: row.id, name: row.name, spec: JSON.parse(row.spec_json), dataFingerprint: row.data_fingerprint, appVersion: row.app_version, createdAt: row.created_at, status: row.status };
}

/** The longest name an analysis may carry. */
export const MAX_ANALYSIS_NAME = 200;

/** Give a saved analysis a name (trimmed); an empty name clears it. Nothing else changes. */
export function renameAnalysis(ws: Workspace, id: number, name: string): { id: number; name: string | null } {
  const trimmed = name.trim();
  if (trimmed.length > MAX_ANALYSIS_NAME) throw new ManyfieldError('invalid-argument', `an analysis name has at most ${MAX_ANALYSIS_NAME} characters (${trimmed.length} given)`);
  const stored = trimmed === '' ? null : trimmed;
  const changed = ws.db.prepare('UPDATE analysis SET name = ? WHERE id = ?').run(stored, id).changes;
  if (changed === 0) throw new ManyfieldError('not-found', `no analysis with id ${id} in this workspace`);
  return { id, name: stored };
}

/** Remove a saved analysis with its results and per-trial rows, in one transaction. */
export function deleteAnalysis(ws: Workspace, id: number): { id: number } {
  const run = ws.db.transaction(() => {
    // explicit deletes: the cascade depends on the connection's foreign-key setting
    ws.db.prepare('DELETE FROM analysis_trial WHERE analysis_id = ?').run(id);
    ws.db.prepare('DELETE FROM analysis_result WHERE analysis_id = ?').run(id);
    return ws.db.prepare('DELETE FROM analysis WHERE id = ?').run(id).changes;
  });
  if (run.immediate() === 0) throw new ManyfieldError('not-found', `no analysis with id ${id} in this workspace`);
  return { id };
}
