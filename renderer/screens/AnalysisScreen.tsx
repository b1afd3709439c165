// The analysis screen: build a spec, run it with progress and cancel, read each contrast's
// results, the rates, and the analyses saved in the workspace (open, run again, rename, delete,
// compare two).
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { useHost } from '../app/hostContext.js';
import type { OpenWorkspace } from '../app/App.js';
import type { CompactAnalysisReport } from '../../src/api/analysis/report.js';
import { checkContrast, type ProtocolShape } from '../shape/contrastCheck.js';
import { draftToSpec, specToDraft, type SpecDraft } from '../shape/specDraft.js';
import { viewFromReport, viewFromSaved, type ResultView } from '../shape/resultView.js';
import { SpecBuilder } from '../analysis/SpecBuilder.js';
import { RunBar, type Running } from '../analysis/RunBar.js';
import { ContrastResults } from '../analysis/ContrastResults.js';
import { RatesView } from '../analysis/RatesView.js';
import { SavedAnalyses, savedTitle, type SavedListing } from '../analysis/SavedAnalyses.js';
import { CompareView } from '../analysis/CompareView.js';
import { ReportProgress, useReportWriter } from '../analysis/ReportWriter.js';

export type AnalysisTab = 'build' | 'results' | 'rates' | 'saved' | 'compare';

interface Props {
  readonly workspace: OpenWorkspace;
  readonly trait: string;
  readonly onOpenTrial: (label: string) => void;
  /** Where the screen keeps its state while another screen is shown. */
  readonly memory: AnalysisMemory;
}

export interface AnalysisMemory {
  draft: SpecDraft | null;
  view: ResultView | null;
  tab: AnalysisTab;
  contrast: string | null;
}

export function newAnalysisMemory(): AnalysisMemory {
  return { draft: null, view: null, tab: 'build', contrast: null };
}

/** Marks for `npm run bench:screens`: results arrived here, the forest plot drawn in ContrastResults. */
function markResultsArrived(): void {
  performance.clearMarks('manyfield:results-arrived');
  performance.mark('manyfield:results-arrived');
}

function startingDraft(trait: string, protocol: ProtocolShape): SpecDraft {
  return {
    trait,
    control: protocol.control ?? protocol.treatments[0]?.code ?? '',
    transform: 'none',
    contrasts: [],
    pairwise: 'none',
    twoStage: { tau2: 'reml', interval: 'hksj' },
    oneStage: { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite' },
    moderators: [],
    threshold: 0,
    rate: null,
  };
}

export function AnalysisScreen({ workspace, trait, onOpenTrial, memory }: Props) {
  const host = useHost();
  const protocol: ProtocolShape = useMemo(() => {
    const p = workspace.info.protocols[0];
    return { control: p?.control ?? null, factors: p?.factors ?? [], treatments: (p?.treatments ?? []).map((t) => ({ code: t.code, levels: t.levels as Record<string, string | number | null> })) };
  }, [workspace]);
  const [draft, setDraftState] = useState<SpecDraft>(memory.draft ?? startingDraft(trait, protocol));
  const [view, setViewState] = useState<ResultView | null>(memory.view);
  const [tab, setTabState] = useState<AnalysisTab>(memory.tab);
  const [contrast, setContrastState] = useState<string | null>(memory.contrast);
  const [running, setRunning] = useState<Running | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [saved, setSaved] = useState<readonly SavedListing[]>([]);
  const [compare, setCompare] = useState<[ResultView, ResultView] | null>(null);
  const [covariates, setCovariates] = useState<Map<string, Record<string, number | string | null>>>(new Map());
  const abort = useRef<AbortController | null>(null);
  const reports = useReportWriter(host, workspace.path);
  const setDraft = (d: SpecDraft) => setDraftState((memory.draft = d));
  const setView = (v: ResultView | null) => setViewState((memory.view = v));
  const setTab = (t: AnalysisTab) => setTabState((memory.tab = t));
  const setContrast = (c: string | null) => setContrastState((memory.contrast = c));

  const refreshSaved = useCallback(async () => {
    const r = await host.call('analysis.list', { workspace: workspace.path });
    if (r.ok) setSaved(r.data);
    return r.ok ? r.data : [];
  }, [host, workspace.path]);
  useEffect(() => {
    void refreshSaved();
    void host.call('trials.covariates', { workspace: workspace.path }).then((r) => (r.ok ? setCovariates(new Map(r.data.map((t) => [t.trial, t.covariates]))) : undefined));
  }, [host, workspace.path, refreshSaved]);

  const covariateNames = useMemo(() => {
    const names = new Set<string>();
    for (const c of covariates.values()) for (const [k, v] of Object.entries(c)) if (v !== null) names.add(k);
    return [...names].sort();
  }, [covariates]);

  const names = draft.contrasts.map((c) => c.name.trim());
  const contrastProblems = draft.contrasts.flatMap((c, i) => checkContrast(c, protocol, names.filter((_, j) => j !== i)));
  const why = draft.contrasts.length === 0 && !draft.rate ? 'Add a contrast or a rate response first.' : contrastProblems.length > 0 ? 'Fix the problems marked in the contrasts first.' : null;

  const run = async (spec: Record<string, unknown>) => {
    const controller = new AbortController();
    abort.current = controller;
    setProblem(null);
    setRunning({ stage: 'starting', fraction: null, step: null });
    const r = await host.call('analysis.run', { workspace: workspace.path, spec: spec as never, save: true }, { signal: controller.signal, onProgress: (e) => setRunning({ stage: e.stage, fraction: e.fraction ?? null, step: e.step ?? null }) });
    abort.current = null;
    markResultsArrived();
    setRunning(null);
    if (!r.ok) {
      setProblem(controller.signal.aborted ? 'The analysis was cancelled; nothing was stored.' : r.error.message);
      return;
    }
    const list = await refreshSaved();
    const v = viewFromReport(r.data as CompactAnalysisReport, spec, list[0]?.id ?? null);
    setView(v);
    setContrast(v.pooled[0]?.name ?? null);
    setTab(v.pooled.length > 0 ? 'results' : v.rateResponse ? 'rates' : 'results');
  };

  const openSaved = async (id: number): Promise<ResultView | null> => {
    const r = await host.call('analysis.open', { workspace: workspace.path, analysis: id, trials: { offset: 0, limit: 10000 }, tables: true });
    markResultsArrived();
    if (!r.ok) {
      setProblem(r.error.message);
      return null;
    }
    return viewFromSaved(r.data);
  };

  const saveSpec = () => void host.saveFile(`${draft.trait || 'analysis'}-spec.json`, `${JSON.stringify(draftToSpec(draft), null, 2)}\n`);
  const prices = draft.rate ? { input: draft.rate.inputPrice, crop: draft.rate.cropPrice } : null;
  const viewRate = view?.rateResponse ?? null;
  const viewSpecRate = (view?.spec.rateResponse ?? null) as { profitableWithin?: number; priceRatio?: number } | null;

  const tabButton = (t: AnalysisTab, label: string, disabled = false) => (
    <button type="button" role="tab" aria-selected={tab === t} className={`tab ${tab === t ? 'current' : ''}`} disabled={disabled} onClick={() => setTab(t)}>
      {label}
    </button>
  );

  return (
    <div className="analysis-screen">
      <div className="screen-head">
        <h1>
          Analysis <span className="subtitle">{view ? `— ${savedTitle({ id: view.analysisId ?? 0, name: view.name, trait: view.trait, createdAt: view.provenance.createdAt })}` : ''}</span>
        </h1>
        <RunBar running={running} canRun={why === null} why={why} onRun={() => void run(draftToSpec(draft))} onCancel={() => abort.current?.abort()} />
      </div>
      {problem ? (
        <p className="banner banner-error" role="alert">
          {problem}
        </p>
      ) : null}
      <div className="tabs" role="tablist" aria-label="Analysis parts">
        {tabButton('build', 'Builder')}
        {tabButton('results', 'Contrasts', !view)}
        {tabButton('rates', 'Rates', !viewRate)}
        {tabButton('saved', `Saved (${saved.length})`)}
        {tabButton('compare', 'Comparison', !compare)}
      </div>
      {tab === 'build' ? (
        <SpecBuilder draft={draft} onChange={setDraft} protocol={protocol} traits={workspace.info.traits} covariateNames={covariateNames} onSaveSpec={saveSpec} onLoadProblem={setProblem} />
      ) : null}
      {tab === 'results' && view ? (
        <>
          <Provenance view={view} />
          <div className="row-fields" role="group" aria-label="Contrast shown">
            {view.pooled.map((p) => (
              <button key={p.name} type="button" className={`chip ${p.name === contrast ? 'current' : ''}`} aria-pressed={p.name === contrast} onClick={() => setContrast(p.name)}>
                {p.name}
              </button>
            ))}
          </div>
          {contrast ? <ContrastResults key={`${view.analysisId}-${contrast}`} view={view} contrast={contrast} covariates={covariates} onOpenTrial={onOpenTrial} /> : <p className="muted">No pooled contrast in this analysis.</p>}
          {view.warnings.length > 0 ? (
            <details className="warnings">
              <summary>{view.warnings.length} warning(s) from the analysis</summary>
              <ul className="small-text">
                {view.warnings.map((w, i) => (
                  <li key={i}>{w}</li>
                ))}
              </ul>
            </details>
          ) : null}
        </>
      ) : null}
      {tab === 'rates' && view && viewRate ? (
        <RatesView
          key={view.analysisId ?? 0}
          rate={viewRate}
          within={viewSpecRate?.profitableWithin ?? 0}
          cautions={view.cautions}
          prices={prices && Math.abs(prices.input / prices.crop - viewRate.priceRatio) <= 1e-12 * viewRate.priceRatio ? prices : { input: viewRate.priceRatio, crop: 1 }}
        />
      ) : null}
      {tab === 'saved' ? <ReportProgress writer={reports} /> : null}
      {tab === 'saved' ? (
        <SavedAnalyses
          list={saved}
          onReport={reports.job ? null : (id) => void reports.write(id)}
          onOpen={async (id) => {
            const v = await openSaved(id);
            if (!v) return;
            setView(v);
            setContrast(v.pooled[0]?.name ?? null);
            setTab(v.pooled.length > 0 ? 'results' : 'rates');
          }}
          onRerun={async (id) => {
            const v = await openSaved(id);
            if (!v) return;
            setDraft(specToDraft(v.spec, draft));
            await run(v.spec);
          }}
          onRename={async (id, name) => {
            const r = await host.call('analysis.rename', { workspace: workspace.path, analysis: id, name });
            if (!r.ok) setProblem(r.error.message);
            if (view?.analysisId === id && r.ok) setView({ ...view, name: r.data.name });
            await refreshSaved();
          }}
          onDelete={async (id) => {
            const r = await host.call('analysis.delete', { workspace: workspace.path, analysis: id });
            if (!r.ok) setProblem(r.error.message);
            if (view?.analysisId === id) setView(null);
            await refreshSaved();
          }}
          onCompare={async (a, b) => {
            const [l, r] = await Promise.all([openSaved(Math.min(a, b)), openSaved(Math.max(a, b))]);
            if (l && r) {
              setCompare([l, r]);
              setTab('compare');
            }
          }}
        />
      ) : null}
      {tab === 'compare' && compare ? <CompareView left={compare[0]} right={compare[1]} /> : null}
    </div>
  );
}

function Provenance({ view }: { view: ResultView }) {
  return (
    <p className="facts small-text" data-testid="provenance">
      <span>
        Trait <strong>{view.trait}</strong>
        {view.unit ? ` (${view.unit})` : ''}
      </span>
      <span>
        Data fingerprint <strong className="mono">{view.provenance.dataFingerprint.slice(0, 12)}…</strong>
      </span>
      <span>
        Run <strong>{new Date(view.provenance.createdAt).toLocaleString('en-GB')}</strong> with Manyfield <strong>{view.provenance.appVersion}</strong>
      </span>
      {view.analysisId !== null ? <span>Saved as analysis {view.analysisId}</span> : null}
    </p>
  );
}
