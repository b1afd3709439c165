// The one contract between the core and every front end (CLI now; Electron IPC and the
// browser server next). Each handler validates its arguments with zod at the boundary and
// returns a Result value; nothing is thrown across it.
import { z } from '../spec/zod.js';
import { analysisSpecSchema } from '../spec/analysisSpec.js';
import { importMappingSchema } from '../intake/types.js';
import type { CallContext } from './context.js';
import { fail, ok, type Result } from './result.js';
import { toApiError } from './errors.js';
import type { DemoSummary } from './workspace/demo.js';
import type { ImportOutcome } from './workspace/importFile.js';
import type { ExportedTable } from './workspace/browse.js';
import { runAnalysisFromSource } from './analysis/fromSource.js';
import type { TrialListing } from '../store/index.js';
import type { AnalysisListing } from '../store/analyses.js';
import type { AnyAnalysisReport } from './analysis/report.js';
import type { SavedAnalysisSummary, SavedTrialDetail } from './analysis/saved.js';

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
  // Saved analyses (src/api/analysis/saved.ts)
  'analysis.list': z.object({ workspace: z.string().min(1) }).strict(),
  'analysis.open': z
    .object({
      workspace: z.string().min(1),
      analysis: z.number().int().positive(),
      /** A page of trial summaries to include, in report order. */
      trials: z.object({ offset: z.number().int().nonnegative().default(0), limit: z.number().int().positive().max(10000).default(100) }).strict().optional(),
      /** Also the per-trial tables: pool weights, leave-one-out, influence, cumulative; one-stage per-trial results. */
      tables: z.boolean().default(false),
    })
    .strict(),
  'analysis.trial': z.object({ workspace: z.string().min(1), analysis: z.number().int().positive(), trial: z.string().min(1) }).strict(),
} as const;

export type HandlerName = keyof typeof handlerArgs;
export type HandlerArgs<K extends HandlerName> = z.input<(typeof handlerArgs)[K]>;

export interface HandlerResults {
  'demo.build': DemoSummary;
  'data.import': ImportOutcome;
  'trials.list': TrialListing[];
  'data.export': ExportedTable;
  'analysis.run': AnyAnalysisReport;
  'analysis.list': AnalysisListing[];
  'analysis.open': SavedAnalysisSummary;
  'analysis.trial': SavedTrialDetail;
}

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
  'analysis.list': async (a) => (await import('./analysis/saved.js')).listSavedAnalyses(a.workspace),
  'analysis.open': async (a) => (await import('./analysis/saved.js')).openSavedAnalysis(a.workspace, a.analysis, a.trials, a.tables),
  'analysis.trial': async (a) => (await import('./analysis/saved.js')).savedTrialDetail(a.workspace, a.analysis, a.trial),
};

function bind<K extends HandlerName>(name: K): HandlerMap[K] {
  return (async (raw: unknown, ctx?: CallContext) => {
    const parsed = handlerArgs[name].safeParse(raw);
    if (!parsed.success) return fail('invalid-argument', `${name}: ${z.prettifyError(parsed.error)}`, parsed.error.issues);
    try {
      const impl = implementations[name] as (a: unknown, c?: CallContext) => Promise<HandlerResults[K]> | HandlerResults[K];
      return ok(await impl(parsed.data, ctx));
    } catch (e) {
      return { ok: false, error: toApiError(e) } as const;
    }
  }) as HandlerMap[K];
}

/** The handler map: what the CLI calls in-process and the shells will expose. */
export const api: HandlerMap = {
  'demo.build': bind('demo.build'),
  'data.import': bind('data.import'),
  'trials.list': bind('trials.list'),
  'data.export': bind('data.export'),
  'analysis.run': bind('analysis.run'),
  'analysis.list': bind('analysis.list'),
  'analysis.open': bind('analysis.open'),
  'analysis.trial': bind('analysis.trial'),
};
