// Runs an analysis on a plot file, a per-trial summary file, or a workspace, and records
// where the data came from so any number can be traced and reproduced.
import { createHash } from 'node:crypto';
import { readDataForAnalysis, readNetworkForAnalysis, readSummaryFile, specHasOneRowPerPlot } from '../../intake/index.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { APP_VERSION } from '../../version.js';
import type { CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import { networkFromTable } from './networkFromTable.js';
import { runAnalysis } from './runAnalysis.js';
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
      return withProvenance(poolSummaryRows(rows, spec, detail), { source: source.data, fingerprint: fingerprint(rows) });
    }
    const { network, sha256 } = specHasOneRowPerPlot(spec) ? await readNetworkForAnalysis(source.data, spec) : await readLongFile(source.data, spec);
    // The file's own SHA-256 identifies the data; the spec (stored beside it) says what was used.
    return withProvenance(runAnalysis(network, spec, ctx, detail), { source: source.data, fingerprint: `sha256:${sha256}` });
  }
  // Imported here, not at the top: the --data path above never needs the store or its native module.
  const { openWorkspace, loadNetwork, saveAnalysis } = await import('../../store/index.js');
  const ws = openWorkspace(source.workspace!);
  try {
    const trait = spec.trait;
    if (!trait) throw new ManyfieldError('invalid-argument', 'the spec must name a "trait" when analysing a workspace');
    const network = loadNetwork(ws, trait);
    const print = fingerprint(network);
    const report = withProvenance(runAnalysis(network, spec, ctx, detail), { source: source.workspace!, fingerprint: print });
    if (source.save) saveAnalysis(ws, spec, print, report, { network });
    return report;
  } finally {
    ws.close();
  }
}

/** A file with a trait column (one row per plot and trait): read as a table, then one trait taken. */
async function readLongFile(file: string, spec: AnalysisSpec): Promise<{ network: NetworkInput; sha256: string }> {
  const { table } = await readDataForAnalysis(file, spec);
  const trait = spec.trait ?? table.traits[0]?.name;
  if (!trait) throw new ManyfieldError('invalid-input', `${file} holds no trait values`);
  return { network: networkFromTable(table, trait), sha256: table.sha256 };
}

function fingerprint(data: NetworkInput | unknown): string {
  return createHash('sha256').update(JSON.stringify(data)).digest('hex');
}

function withProvenance<R extends AnyAnalysisReport>(report: Omit<R, 'provenance'>, p: { source: string; fingerprint: string }): R {
  return { ...report, provenance: { source: p.source, dataFingerprint: p.fingerprint, appVersion: APP_VERSION, createdAt: new Date().toISOString() } } as R;
}
