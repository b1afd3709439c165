// Runs an analysis on a plot file, a per-trial summary file, or a workspace, and records
// where the data came from so any number can be traced and reproduced.
import { createHash } from 'node:crypto';
import { formatProblems, readSummaryFile } from '../../intake/index.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { APP_VERSION } from '../../version.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import { runAnalysisCancellable, runFileAnalysisCancellable } from './cancellable.js';
import { poolSummaryRows } from './poolSummary.js';
import type { AnyAnalysisReport, ReportDetail } from './report.js';

export interface AnalysisSource {
  readonly workspace?: string;
  readonly data?: string;
  readonly spec: AnalysisSpec;
  readonly save: boolean;
  /** 'summary' (default): compact per-trial results; 'plots': every trial's full analysis. */
  readonly detail?: ReportDetail;
}

export async function runAnalysisFromSource(source: AnalysisSource, ctx?: CallContext): Promise<AnyAnalysisReport> {
  const detail = source.detail ?? 'summary';
  const { spec } = source;
  if (source.data !== undefined) {
    if (spec.columns?.estimate !== undefined || spec.columns?.se !== undefined) {
      if (!spec.columns.estimate || !spec.columns.se) throw new ManyfieldError('invalid-argument', 'pooling a summary file needs both columns.estimate and columns.se');
      const rows = await readSummaryFile(source.data, spec.columns);
      const pooled = withProvenance(poolSummaryRows(rows, spec, detail), { source: source.data, fingerprint: fingerprint(rows) });
      await ctx?.deliver?.(pooled);
      return pooled;
    }
    // Read where the analysis runs (the worker, when there is one), so the network is not copied.
    const { report: analysed, sha256, warnings } = await runFileAnalysisCancellable(source.data, spec, ctx, detail);
    // The file's own SHA-256 identifies the data; the spec (stored beside it) says what was used.
    const report = withProvenance({ ...analysed, warnings: [...warnings.map((w) => formatProblems([w])), ...analysed.warnings] }, { source: source.data, fingerprint: `sha256:${sha256}` });
    await ctx?.deliver?.(report);
    return report;
  }
  // Imported here, not at the top: the --data path above never needs the store or its native module.
  const store = await import('../../store/index.js');
  const path = source.workspace!;
  try {
    const target = store.resolveWorkspacePath(path);
    // An analysis that is not stored only reads, so a read-only workspace serves it.
    const ws = source.save ? store.openWorkspace(target) : store.openWorkspaceForReading(target);
    try {
      const trait = spec.trait;
      if (!trait) throw new ManyfieldError('invalid-argument', 'the spec must name a "trait" when analysing a workspace');
      const network = store.loadNetwork(ws, trait);
      const running = runAnalysisCancellable(network, spec, ctx, detail);
      // Hashed while the worker analyses: the network was handed to it as the call above began.
      const print = fingerprint(network);
      const report = withProvenance(await running, { source: path, fingerprint: print });
      // Stored last, after the caller has taken the result (written its output file): a failed
      // analysis — or one whose output could not be written — leaves no stored analysis behind.
      throwIfCancelled(ctx);
      await ctx?.deliver?.(report);
      if (source.save) {
        // A computed result is worth waiting for: another writer gets a minute, not five seconds.
        ws.db.pragma('busy_timeout = 60000');
        store.saveAnalysis(ws, spec, print, report, { network });
      }
      return report;
    } finally {
      ws.close();
    }
  } catch (e) {
    throw store.explainSqliteError(e, path);
  }
}

function fingerprint(data: NetworkInput | unknown): string {
  return createHash('sha256').update(JSON.stringify(data)).digest('hex');
}

function withProvenance<R extends AnyAnalysisReport>(report: Omit<R, 'provenance'>, p: { source: string; fingerprint: string }): R {
  return { ...report, provenance: { source: p.source, dataFingerprint: p.fingerprint, appVersion: APP_VERSION, createdAt: new Date().toISOString() } } as R;
}
