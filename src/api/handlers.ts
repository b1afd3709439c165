// The one contract between the core and every front end (the CLI in-process, the Electron
// preload over IPC, the browser mode over HTTP). Each handler validates its arguments with zod
// at the boundary and returns a Result value; nothing is thrown across it.
import { basename } from 'node:path';
import { z } from '../spec/zod.js';
import { analysisSpecSchema } from '../spec/analysisSpec.js';
import { importMappingSchema } from '../intake/types.js';
import type { CallContext } from './context.js';
import { fail, ok, type Result } from './result.js';
import { toApiError } from './errors.js';
import { describeIssues } from '../spec/describeIssues.js';
import { checkJsonShape, JsonShapeError } from '../intake/jsonInput.js';
import type { DemoSummary } from './workspace/demo.js';
import type { ImportOutcome } from './workspace/importFile.js';
import type { ExportedTable } from './workspace/browse.js';
import { runAnalysisFromSource } from './analysis/fromSource.js';
import type { TrialListing } from '../store/index.js';
import type { WorkspaceDescription } from './workspace/describe.js';
import type { SiteEntry } from './workspace/sites.js';
import type { TrialOverviewEntry } from './trials/overview.js';
import type { TrialNetworkChecks } from './trials/networkChecks.js';
import type { TrialDetail } from './trials/detail.js';
import type { ExclusionEntry, ExclusionRecord, InclusionRecord } from './plots/exclusions.js';
import type { FilePreview } from './intake/preview.js';
import type { ValidationReport } from './intake/validate.js';
import { HANDLER_NAMES, type HandlerNameList } from './handlerNames.js';

const workspacePath = z.string().min(1).max(4096);
/** A data file: a path (CLI, Electron dialog) or an upload reference the browser server maps to one. */
const fileRef = z.string().min(1).max(4096);
const rowId = z.number().int().positive();
import type { AnalysisListing } from '../store/analyses.js';
import type { AnyAnalysisReport } from './analysis/report.js';
import type { AppReport } from './report/reportForApp.js';
import type { SavedAnalysisSummary, SavedTrialDetail } from './analysis/saved.js';
import type { RateOptimumResult } from './analysis/rateOptimum.js';
import type { TrialCovariates } from '../store/trialCovariates.js';

export const handlerArgs = {
  'demo.build': z.object({ workspace: z.string().min(1), replace: z.boolean().default(false) }).strict(),
  'data.import': z
    .object({ workspace: z.string().min(1), file: z.string().min(1), mapping: z.union([z.string().min(1), importMappingSchema]), replace: z.boolean().default(false) })
    .strict(),
  'trials.list': z.object({ workspace: z.string().min(1) }).strict(),
  'data.export': z.object({ workspace: z.string().min(1), trait: z.string().min(1) }).strict(),
  'analysis.run': z
    .object({
      workspace: z.string().min(1).optional(),
      data: z.string().min(1).optional(),
      spec: analysisSpecSchema,
      save: z.boolean().default(true),
      /** 'summary': compact per-trial results (default); 'plots': every trial's full analysis. */
      detail: z.enum(['summary', 'plots']).default('summary'),
    })
    .strict()
    .refine((a) => (a.workspace === undefined) !== (a.data === undefined), 'give exactly one of "workspace" and "data"'),
  'workspace.describe': z.object({ workspace: workspacePath }).strict(),
  'workspace.create': z.object({ workspace: workspacePath }).strict(),
  'sites.list': z.object({ workspace: workspacePath }).strict(),
  'trials.overview': z.object({ workspace: workspacePath, trait: z.string().min(1) }).strict(),
  'trials.checks': z.object({ workspace: workspacePath, trait: z.string().min(1) }).strict(),
  'trial.detail': z.object({ workspace: workspacePath, trial: rowId, trait: z.string().min(1) }).strict(),
  'plots.exclude': z.object({ workspace: workspacePath, plot: rowId, reason: z.string().trim().min(1, 'an exclusion needs a reason').max(500) }).strict(),
  'plots.include': z.object({ workspace: workspacePath, plot: rowId }).strict(),
  'exclusions.list': z.object({ workspace: workspacePath }).strict(),
  'data.preview': z.object({ file: fileRef, sheet: z.string().min(1).optional() }).strict(),
  'data.validate': z.object({ workspace: workspacePath, file: fileRef, mapping: importMappingSchema }).strict(),
  // Saved analyses (src/api/analysis/saved.ts)
  'analysis.list': z.object({ workspace: workspacePath }).strict(),
  'analysis.open': z
    .object({
      workspace: workspacePath,
      analysis: z.number().int().positive(),
      /** A page of trial summaries to include, in report order. */
      trials: z.object({ offset: z.number().int().nonnegative().default(0), limit: z.number().int().positive().max(10000).default(100) }).strict().optional(),
      /** Also the per-trial tables: pool weights, leave-one-out, influence, cumulative; one-stage per-trial results. */
      tables: z.boolean().default(false),
    })
    .strict(),
  'analysis.trial': z.object({ workspace: workspacePath, analysis: z.number().int().positive(), trial: z.string().min(1) }).strict(),
  'analysis.rename': z.object({ workspace: workspacePath, analysis: z.number().int().positive(), name: z.string().max(200) }).strict(),
  'analysis.delete': z.object({ workspace: workspacePath, analysis: z.number().int().positive() }).strict(),
  'trials.covariates': z.object({ workspace: workspacePath }).strict(),
  // The optimum at another price ratio from the fitted curves a rate-response result holds (no refit).
  'rates.optimum': z
    .object({
      trials: z
        .array(
          z
            .object({
              trial: z.string().min(1).max(200),
              model: z.enum(['linear', 'quadratic', 'linear-plateau', 'quadratic-plateau', 'exponential']).nullable(),
              params: z.record(z.string().max(40), z.number().nullable()),
              testedRange: z.tuple([z.number().nullable(), z.number().nullable()]),
              converged: z.boolean(),
            })
            .strip(),
        )
        .max(20000),
      priceRatio: z.number().positive().finite(),
      within: z.number().nonnegative().finite().default(0),
      points: z.number().int().min(2).max(401).default(81),
    })
    .strict(),
  // The recommendation report of a saved analysis (src/api/report/buildReport.ts)
  'report.build': z.object({ workspace: workspacePath, analysis: z.number().int().positive(), pdf: z.boolean().optional() }).strict(),
} as const;

export type HandlerName = keyof typeof handlerArgs;
export type HandlerArgs<K extends HandlerName> = z.input<(typeof handlerArgs)[K]>;

export interface HandlerResults {
  'demo.build': DemoSummary;
  'data.import': ImportOutcome;
  'trials.list': TrialListing[];
  'data.export': ExportedTable;
  'analysis.run': AnyAnalysisReport;
  'workspace.describe': WorkspaceDescription;
  'workspace.create': WorkspaceDescription;
  'sites.list': SiteEntry[];
  'trials.overview': TrialOverviewEntry[];
  'trials.checks': TrialNetworkChecks;
  'trial.detail': TrialDetail;
  'plots.exclude': ExclusionRecord;
  'plots.include': InclusionRecord;
  'exclusions.list': ExclusionEntry[];
  'data.preview': FilePreview;
  'data.validate': ValidationReport;
  'analysis.list': AnalysisListing[];
  'analysis.open': SavedAnalysisSummary;
  'report.build': AppReport;
  'analysis.trial': SavedTrialDetail;
  'analysis.rename': { id: number; name: string | null };
  'analysis.delete': { id: number };
  'rates.optimum': RateOptimumResult;
  'trials.covariates': TrialCovariates[];
}

export { HANDLER_NAMES, LONG_HANDLERS } from './handlerNames.js';

// The schema map and the name list must agree both ways (a test checks the order-free equality at run time too).
type SameKeys<A, B> = [Exclude<A, B>, Exclude<B, A>] extends [never, never] ? true : never;
const namesAgree: SameKeys<HandlerName, HandlerNameList> = true;
void namesAgree;

export type HandlerMap = { [K in HandlerName]: (args: HandlerArgs<K>, ctx?: CallContext) => Promise<Result<HandlerResults[K]>> };

type Implementations = { [K in HandlerName]: (args: z.output<(typeof handlerArgs)[K]>, ctx?: CallContext) => Promise<HandlerResults[K]> | HandlerResults[K] };

// The workspace handlers are imported on first use: `analyze --data` never opens a workspace, and
// a fresh process should not pay for loading the store (and its native SQLite module) it won't use.
const implementations: Implementations = {
  'demo.build': async (a, ctx) => (await import('./workspace/demo.js')).buildDemo(a.workspace, a.replace, ctx),
  'data.import': async (a, ctx) => (await import('./workspace/importFile.js')).importFile(a, ctx),
  'trials.list': async (a) => (await import('./workspace/browse.js')).listWorkspaceTrials(a.workspace),
  'data.export': async (a) => (await import('./workspace/browse.js')).exportWorkspaceTrait(a.workspace, a.trait),
  'analysis.run': (a, ctx) => runAnalysisFromSource(a, ctx),
  'workspace.describe': async (a) => (await import('./workspace/describe.js')).describeWorkspace(a.workspace),
  'workspace.create': async (a) => (await import('./workspace/describe.js')).createWorkspace(a.workspace),
  'sites.list': async (a) => (await import('./workspace/sites.js')).listSites(a.workspace),
  'trials.overview': async (a, ctx) => (await import('./trials/overview.js')).trialsOverview(a.workspace, a.trait, ctx),
  'trials.checks': async (a) => (await import('./trials/networkChecks.js')).trialNetworkChecks(a.workspace, a.trait),
  'trial.detail': async (a) => (await import('./trials/detail.js')).trialDetail(a.workspace, a.trial, a.trait),
  'plots.exclude': async (a) => (await import('./plots/exclusions.js')).excludeStoredPlot(a.workspace, a.plot, a.reason),
  'plots.include': async (a) => (await import('./plots/exclusions.js')).includeStoredPlot(a.workspace, a.plot),
  'exclusions.list': async (a) => (await import('./plots/exclusions.js')).listExclusions(a.workspace),
  'data.preview': async (a) => (await import('./intake/preview.js')).previewFile(a.file, basename(a.file), a.sheet),
  'data.validate': async (a, ctx) => (await import('./intake/validate.js')).validateFile(a.workspace, a.file, basename(a.file), a.mapping, ctx),
  'report.build': async (a, ctx) => (await import('./report/reportForApp.js')).reportForApp(a, ctx),
  'analysis.list': async (a) => (await import('./analysis/saved.js')).listSavedAnalyses(a.workspace),
  'analysis.open': async (a) => (await import('./analysis/saved.js')).openSavedAnalysis(a.workspace, a.analysis, a.trials, a.tables),
  'analysis.trial': async (a) => (await import('./analysis/saved.js')).savedTrialDetail(a.workspace, a.analysis, a.trial),
  'analysis.rename': async (a) => (await import('./analysis/saved.js')).renameSavedAnalysis(a.workspace, a.analysis, a.name),
  'analysis.delete': async (a) => (await import('./analysis/saved.js')).deleteSavedAnalysis(a.workspace, a.analysis),
  'trials.covariates': async (a) => {
    const store = await import('../store/index.js');
    const { listTrialCovariates } = await import('../store/trialCovariates.js');
    const ws = store.openWorkspace(a.workspace);
    try {
      return listTrialCovariates(ws);
    } finally {
      ws.close();
    }
  },
  'rates.optimum': async (a) => (await import('./analysis/rateOptimum.js')).rateOptimumAt(a),
};

function bind<K extends HandlerName>(name: K): HandlerMap[K] {
  return (async (raw: unknown, ctx?: CallContext) => {
    try {
      checkJsonShape(raw); // depth and text length bounded before any recursive walk
    } catch (e) {
      if (e instanceof JsonShapeError) return fail('invalid-argument', `${name}: ${e.message}`, { key: e.key });
      throw e;
    }
    const parsed = handlerArgs[name].safeParse(raw);
    if (!parsed.success) {
      const lines = describeIssues(handlerArgs[name], raw, parsed.error.issues, '');
      const what = name === 'analysis.run' ? 'the analysis spec' : `the arguments of ${name}`;
      return fail('invalid-argument', `${what} ${lines.length > 1 ? `has ${lines.length} problems` : 'has a problem'}:\n  ${lines.join('\n  ')}`, parsed.error.issues);
    }
    try {
      const impl = implementations[name] as (a: unknown, c?: CallContext) => Promise<HandlerResults[K]> | HandlerResults[K];
      return ok(await impl(parsed.data, ctx));
    } catch (e) {
      return { ok: false, error: toApiError(e) } as const;
    }
  }) as HandlerMap[K];
}

/** The handler map: what the CLI calls in-process and the shells expose. */
export const api: HandlerMap = Object.fromEntries(HANDLER_NAMES.map((name) => [name, bind(name)])) as HandlerMap;

/** Call a handler by a name known only at run time (IPC, HTTP); an unknown name is a Result too. */
export function callHandler(name: string, args: unknown, ctx?: CallContext): Promise<Result<unknown>> {
  if (!isHandlerName(name)) return Promise.resolve(fail('not-found', `no handler named "${name}"`));
  return (api[name] as (a: unknown, c?: CallContext) => Promise<Result<unknown>>)(args, ctx);
}

export function isHandlerName(name: string): name is HandlerName {
  return Object.hasOwn(handlerArgs, name);
}
