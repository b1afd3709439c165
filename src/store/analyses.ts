// Analyses are stored with their spec, the fingerprint of the data they saw and the build
// that ran them, so any reported number can be traced and reproduced.
import { ManyfieldError } from '../api/result.js';
import { APP_VERSION } from '../version.js';
import type { Workspace } from './workspace.js';

export type AnalysisStatus = 'running' | 'complete' | 'failed' | 'cancelled';

export interface SaveAnalysisOptions {
  readonly status?: AnalysisStatus;
  readonly appVersion?: string;
  readonly now?: () => Date;
}

/**
 * Store an analysis. Each own property of `results` (oneStage, twoStage, warnings ...) becomes
 * one analysis_result row of that kind, so parts can be read back without parsing the rest.
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
      if (payload === undefined) continue;
      insert.run(id, kind, JSON.stringify(payload));
    }
    return id;
  });
  return run.immediate();
}

export interface StoredAnalysis {
  readonly id: number;
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
  for (const r of ws.db.prepare('SELECT kind, payload_json FROM analysis_result WHERE analysis_id = ? ORDER BY id').all(id) as { kind: string; payload_json: string }[]) {
    results[r.kind] = JSON.parse(r.payload_json);
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
