// Saved analyses for the screens: the list, one analysis's summary (with a page of its trials
// when asked), and one trial's full detail — recomputed from the workspace data after checking
// that the trial's data are those the analysis saw, or read as stored for analyses saved with
// every trial's full result.
import { resolveContrast } from '../../engine/contrasts/resolve.js';
import { isFullTrialAnalysis } from '../../engine/trial/trialSummary.js';
import type { NetworkInput } from '../../engine/types.js';
import { analysisSpecSchema, type AnalysisSpec } from '../../spec/analysisSpec.js';
import type { AnalysisListing, StoredAnalysis } from '../../store/analyses.js';
import type { AnalysisTrialRow } from '../../store/analysisTrials.js';
import { ManyfieldError } from '../result.js';
import { applyExclusions } from './exclusions.js';
import type { TrialStageEntry } from './report.js';
import { analyseOneTrial } from './runAnalysis.js';

export interface SavedAnalysisSummary extends StoredAnalysis {
  /** The requested page of trial summaries, in report order (empty unless a page was asked for). */
  readonly trials: readonly AnalysisTrialRow[];
}

export interface SavedTrialDetail {
  readonly analysis: number;
  readonly trial: string;
  /** 'recomputed': from the workspace data, checked to be the data analysed; 'stored': saved in full with the analysis. */
  readonly source: 'recomputed' | 'stored';
  readonly detail: TrialStageEntry;
}

async function withWorkspace<T>(path: string, run: (ws: import('../../store/workspace.js').Workspace, store: typeof import('../../store/index.js')) => T): Promise<T> {
  const store = await import('../../store/index.js');
  const ws = store.openWorkspace(path);
  try {
    return run(ws, store);
  } finally {
    ws.close();
  }
}

export async function listSavedAnalyses(workspace: string): Promise<AnalysisListing[]> {
  return withWorkspace(workspace, (ws, store) => store.listAnalyses(ws));
}

export async function renameSavedAnalysis(workspace: string, analysis: number, name: string): Promise<{ id: number; name: string | null }> {
  return withWorkspace(workspace, (ws, store) => store.renameAnalysis(ws, analysis, name));
}

export async function deleteSavedAnalysis(workspace: string, analysis: number): Promise<{ id: number }> {
  return withWorkspace(workspace, (ws, store) => store.deleteAnalysis(ws, analysis));
}

export async function openSavedAnalysis(workspace: string, analysis: number, page?: { offset: number; limit: number }, tables = false): Promise<SavedAnalysisSummary> {
  return withWorkspace(workspace, (ws, store) => {
    const summary = store.loadAnalysisSummary(ws, analysis, { tables });
    if (!page) return { ...summary, trials: [] };
    if (store.hasTrialRows(ws, analysis)) return { ...summary, trials: store.listAnalysisTrials(ws, analysis, page.offset, page.limit) };
    // saved before per-trial rows: the trials are inside the stored report
    const stored = store.loadAnalysis(ws, analysis);
    const legacy = legacyTrials(stored);
    // a trial's contrast meaning equal to its pool's is carried once, by the pool, as a new save does
    const pooled = (stored.results.twoStage as { pooled?: { name?: unknown; meaning?: unknown }[] } | undefined)?.pooled ?? [];
    const shared = new Map(pooled.flatMap((p) => (typeof p.name === 'string' && typeof p.meaning === 'string' ? [[p.name, p.meaning] as const] : [])));
    return {
      ...summary,
      trials: legacy.slice(page.offset, page.offset + page.limit).map((t, i) => ({ position: page.offset + i, trial: t.trial, dataSha256: null, summary: store.storedTrialSummary(t, shared) })),
    };
  });
}

export async function savedTrialDetail(workspace: string, analysis: number, trial: string): Promise<SavedTrialDetail> {
  return withWorkspace(workspace, (ws, store) => {
    if (!store.hasTrialRows(ws, analysis)) {
      const stored = legacyTrials(store.loadAnalysis(ws, analysis)).find((t) => t.trial === trial);
      if (!stored) throw new ManyfieldError('not-found', `analysis ${analysis} has no trial "${trial}"`, { analysis, trial });
      if (!isFullTrialAnalysis(stored)) throw new ManyfieldError('not-found', `analysis ${analysis} holds only a summary for trial "${trial}" (pooled from a summary file)`, { analysis, trial });
      return { analysis, trial, source: 'stored', detail: stored as unknown as TrialStageEntry };
    }
    const head = store.loadAnalysisHead(ws, analysis);
    const row = store.findAnalysisTrial(ws, analysis, trial);
    if (!row) throw new ManyfieldError('not-found', `analysis ${analysis} has no trial "${trial}"`, { analysis, trial });
    const spec = analysisSpecSchema.parse(head.spec);
    if (!spec.trait) throw new ManyfieldError('invalid-input', `analysis ${analysis} names no trait in its spec`);
    const network = store.loadNetwork(ws, spec.trait, { trials: [store.trialIdByLabel(ws, trial)] });
    const input = network.trials[0];
    if (row.dataSha256 === null || store.trialDataSha256(input) !== row.dataSha256)
      throw new ManyfieldError('conflict', `the data of trial "${trial}" changed after analysis ${analysis} was saved; run the analysis again to see its per-plot detail`, { analysis, trial });
    return { analysis, trial, source: 'recomputed', detail: recomputeTrial(network, spec, row.summary) };
  });
}

/** The trial's full analysis with the spec's contrasts, exclusions and the log offset the analysis used. */
function recomputeTrial(network: NetworkInput, spec: AnalysisSpec, summary: unknown): TrialStageEntry {
  const trial = network.trials[0].trial;
  const warnings: string[] = [];
  const one = applyExclusions(network, spec.exclude.filter((e) => e.trial === trial), warnings);
  const control = spec.control ?? one.control;
  const contrasts = spec.contrasts.map((c) => resolveContrast(c, one.treatments, control, one.factors));
  const storedOffset = (summary as { transform?: { logOffset?: number | null } }).transform?.logOffset;
  const logOffset = spec.transform === 'log' ? (spec.logOffset ?? (storedOffset || undefined)) : spec.logOffset;
  return analyseOneTrial(one.trials[0], one, contrasts, spec, logOffset);
}

function legacyTrials(stored: StoredAnalysis): ({ trial: string } & object)[] {
  const twoStage = stored.results.twoStage as { trials?: ({ trial: string } & object)[] } | undefined;
  return twoStage?.trials ?? [];
}
