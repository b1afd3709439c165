// Runs an analysis on a plot file, a per-trial summary file, or a workspace, and records
// where the data came from so any number can be traced and reproduced.
import { createHash } from 'node:crypto';
import { formatProblems, readDataForAnalysis, readNetworkForAnalysis, readSummaryFile, specHasOneRowPerPlot, type IntakeProblem } from '../../intake/index.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { APP_VERSION } from '../../version.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import { networkFromTable } from './networkFromTable.js';
import { runAnalysisCancellable } from './cancellable.js';
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
    const { network, sha256, warnings } = specHasOneRowPerPlot(spec) ? await readNetworkForAnalysis(source.data, spec) : await readLongFile(source.data, spec);
    // The file's own SHA-256 identifies the data; the spec (stored beside it) says what was used.
    const analysed = await runAnalysisCancellable(network, spec, ctx, detail);
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
      const print = fingerprint(network);
      const report = withProvenance(await runAnalysisCancellable(network, spec, ctx, detail), { source: path, fingerprint: print });
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

/** A file with a trait column (one row per plot and trait): read as a table, then one trait taken. */
async function readLongFile(file: string, spec: AnalysisSpec): Promise<{ network: NetworkInput; sha256: string; warnings: readonly IntakeProblem[] }> {
  const { table } = await readDataForAnalysis(file, spec);
  const trait = spec.trait ?? table.traits[0]?.name;
  if (!trait) throw new ManyfieldError('invalid-input', `${file} holds no trait values`);
  return { network: networkFromTable(table, trait), sha256: table.sha256, warnings: (table.warnings ?? []).filter((w) => w.message.startsWith(`${trait} `)) };
}

function fingerprint(data: NetworkInput | unknown): string {
  return createHash('sha256').update(JSON.stringify(data)).digest('hex');
}

function withProvenance<R extends AnyAnalysisReport>(report: Omit<R, 'provenance'>, p: { source: string; fingerprint: string }): R {
  return { ...report, provenance: { source: p.source, dataFingerprint: p.fingerprint, appVersion: APP_VERSION, createdAt: new Date().toISOString() } } as R;
}
