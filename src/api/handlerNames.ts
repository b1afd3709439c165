// The handler names alone, in a module with no imports: the sandboxed Electron preload (which
// may require nothing but "electron") exposes exactly these, and handlers.ts is checked to
// declare exactly these.
export const HANDLER_NAMES = [
  'demo.build',
  'data.import',
  'trials.list',
  'data.export',
  'analysis.run',
  'workspace.describe',
  'workspace.create',
  'sites.list',
  'trials.overview',
  'trials.checks',
  'trial.detail',
  'plots.exclude',
  'plots.include',
  'exclusions.list',
  'data.preview',
  'data.validate',
  'analysis.list',
  'analysis.open',
  'analysis.trial',
  'analysis.rename',
  'analysis.delete',
  'rates.optimum',
  'trials.covariates',
  'report.build',
] as const;

export type HandlerNameList = (typeof HANDLER_NAMES)[number];

/**
 * Handlers that can run long: the shells run them off the window's or server's thread, with
 * progress and cancel. trials.overview runs the trial stage of every trial (about 2 s for
 * 1,000 trials), so it is one of them; report.build re-runs an analysis and may print it.
 */
export const LONG_HANDLERS: ReadonlySet<HandlerNameList> = new Set<HandlerNameList>(['demo.build', 'data.import', 'data.validate', 'analysis.run', 'trials.overview', 'report.build']);
