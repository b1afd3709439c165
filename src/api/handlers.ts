// The one contract between the core and every front end (CLI now; Electron IPC and the
// browser server next). Each handler validates its arguments with zod at the boundary and
// returns a Result value; nothing is thrown across it.
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
import type { AnalysisReport } from './analysis/report.js';
import type { TrialListing } from '../store/index.js';

export const handlerArgs = {
  'demo.build': z.object({ workspace: z.string().min(1), replace: z.boolean().default(false) }).strict(),
  'data.import': z
    .object({ workspace: z.string().min(1), file: z.string().min(1), mapping: z.union([z.string().min(1), importMappingSchema]), replace: z.boolean().default(false) })
    .strict(),
  'trials.list': z.object({ workspace: z.string().min(1) }).strict(),
  'data.export': z.object({ workspace: z.string().min(1), trait: z.string().min(1) }).strict(),
  'analysis.run': z
    .object({ workspace: z.string().min(1).optional(), data: z.string().min(1).optional(), spec: analysisSpecSchema, save: z.boolean().default(true) })
    .strict()
    .refine((a) => (a.workspace === undefined) !== (a.data === undefined), 'give exactly one of "workspace" and "data"'),
} as const;

export type HandlerName = keyof typeof handlerArgs;
export type HandlerArgs<K extends HandlerName> = z.input<(typeof handlerArgs)[K]>;

export interface HandlerResults {
  'demo.build': DemoSummary;
  'data.import': ImportOutcome;
  'trials.list': TrialListing[];
  'data.export': ExportedTable;
  'analysis.run': AnalysisReport;
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

/** The handler map: what the CLI calls in-process and the shells will expose. */
export const api: HandlerMap = {
  'demo.build': bind('demo.build'),
  'data.import': bind('data.import'),
  'trials.list': bind('trials.list'),
  'data.export': bind('data.export'),
  'analysis.run': bind('analysis.run'),
};
