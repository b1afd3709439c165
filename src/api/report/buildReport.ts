// Builds the recommendation report: runs the spec (or a saved analysis's spec) on the workspace
// or data file, gathers what the analysis document does not carry (sites, exclusions, imported
// files with their hashes), and writes the self-contained HTML.
import type { CompactAnalysisReport } from '../analysis/report.js';
import { analysisSpecSchema, type AnalysisSpec } from '../../spec/analysisSpec.js';
import { describeIssues } from '../../spec/describeIssues.js';
import { buildReportHtml } from '../../report/html/buildReportHtml.js';
import { loadReportCharts } from '../../report/html/loadCharts.js';
import type { ReportCharts, ReportExclusion, ReportImport, ReportInput, ReportSite } from '../../report/html/reportInput.js';
import type { CallContext } from '../context.js';
import { runAnalysisFromSource } from '../analysis/fromSource.js';
import { ManyfieldError } from '../result.js';

export interface ReportRequest {
  readonly workspace?: string;
  readonly data?: string;
  readonly spec?: unknown;
  /** A saved analysis of the workspace: its spec is re-run and its fingerprint checked. */
  readonly analysis?: number;
}

export interface BuiltReport {
  readonly html: string;
  readonly analysis: CompactAnalysisReport;
  /** False when a saved analysis's data fingerprint differs from the data analysed now. */
  readonly reproduced: boolean | null;
}

interface WorkspaceFacts {
  sites: ReportSite[];
  imports: ReportImport[];
  exclusions: ReportExclusion[];
  saved: ReportInput['savedAnalysis'];
  savedSpec: unknown;
}

async function workspaceFacts(path: string, analysis: number | undefined): Promise<WorkspaceFacts> {
  const store = await import('../../store/index.js');
  const { listSites } = await import('../workspace/sites.js');
  const { listExclusions } = await import('../plots/exclusions.js');
  const sites = listSites(path).map((s) => ({ code: s.code, name: s.name, lat: s.lat, lon: s.lon, trials: s.trials }));
  const exclusions = listExclusions(path).map((e): ReportExclusion => ({ trial: e.trialLabel, plot: e.label, reason: e.reason, source: 'workspace' }));
  const ws = store.openWorkspaceForReading(path);
  try {
    const imports = (ws.db.prepare('SELECT file_name, sha256, rows_stored, created_at FROM import_batch ORDER BY id').all() as { file_name: string; sha256: string; rows_stored: number; created_at: string }[]).map((r) => ({
      file: r.file_name,
      sha256: r.sha256,
      rowsStored: r.rows_stored,
      createdAt: r.created_at,
    }));
    let saved: ReportInput['savedAnalysis'] = null;
    let savedSpec: unknown = undefined;
    if (analysis !== undefined) {
      const a = store.loadAnalysisSummary(ws, analysis);
      saved = { id: a.id, fingerprint: a.dataFingerprint, createdAt: a.createdAt };
      savedSpec = a.spec;
    }
    return { sites, imports, exclusions, saved, savedSpec };
  } finally {
    ws.close();
  }
}

function parseSpec(spec: unknown): AnalysisSpec {
  const parsed = analysisSpecSchema.safeParse(spec);
  if (!parsed.success) throw new ManyfieldError('invalid-argument', `the analysis spec: ${describeIssues(analysisSpecSchema, spec, parsed.error.issues, "spec").join("; ")}`);
  return parsed.data;
}

export async function buildReport(req: ReportRequest, ctx?: CallContext, charts: ReportCharts = loadReportCharts()): Promise<BuiltReport> {
  if ((req.workspace === undefined) === (req.data === undefined)) throw new ManyfieldError('invalid-argument', 'a report needs exactly one of a workspace and a data file');
  if (req.analysis !== undefined && req.workspace === undefined) throw new ManyfieldError('invalid-argument', 'a saved analysis belongs to a workspace: give the workspace');
  const facts: WorkspaceFacts = req.workspace !== undefined ? await workspaceFacts(req.workspace, req.analysis) : { sites: [], imports: [], exclusions: [], saved: null, savedSpec: undefined };
  const specJson = req.analysis !== undefined ? facts.savedSpec : req.spec;
  if (specJson === undefined) throw new ManyfieldError('invalid-argument', 'a report needs a spec or a saved analysis');
  const spec = parseSpec(specJson);
  const analysis = (await runAnalysisFromSource({ workspace: req.workspace, data: req.data, spec, save: false, detail: 'summary' }, ctx)) as CompactAnalysisReport;
  ctx?.onProgress?.({ stage: 'report-write', fraction: null });
  const specExclusions = (spec.exclude ?? []).map((e): ReportExclusion => ({ trial: String(e.trial), plot: 'plot' in e && e.plot !== undefined ? String(e.plot) : `row ${String((e as { row?: unknown }).row)}`, reason: e.reason, source: 'spec' }));
  const input: ReportInput = {
    analysis,
    spec: specJson,
    sourceLabel: req.workspace ?? req.data ?? '',
    sites: facts.sites,
    imports: facts.imports,
    exclusions: [...facts.exclusions, ...specExclusions],
    savedAnalysis: facts.saved,
    generatedAt: new Date().toISOString(),
  };
  return { html: buildReportHtml(input, charts), analysis, reproduced: facts.saved ? facts.saved.fingerprint === analysis.provenance.dataFingerprint : null };
}
