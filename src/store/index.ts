// The workspace store: open + migrate, and the repositories that turn rows into domain values.
export { openWorkspace, openWorkspaceForReading, Workspace, type OpenWorkspaceOptions } from './workspace.js';
export { resolveWorkspacePath } from './workspacePath.js';
export { explainSqliteError, withWorkspaceErrors } from './sqliteErrors.js';
export { createWorkspaceWith, removeDatabaseFiles, type CreateOutcome } from './createWorkspace.js';
export {
  migrate,
  readMigrations,
  readHistory,
  pendingMigrations,
  defaultMigrationsDir,
  migrationChecksum,
  backupPathFor,
  type MigrationFile,
  type AppliedMigration,
  type MigrateOptions,
  type MigrateOutcome,
} from './migrate.js';
export {
  WorkspaceRefusedError,
  WorkspaceNotFoundError,
  ImportRefusedError,
  type WorkspaceRefusalReason,
  type ImportRefusalReason,
} from './errors.js';
export { importParsedTable, type ImportOptions, type ImportSummary, type BatchCounts } from './importTable.js';
export { listTrials, counts, type TrialListing, type WorkspaceCounts } from './trials.js';
export { loadNetwork, type LoadNetworkOptions } from './network.js';
export { exportTrait, type ExportedTrait, type ExportCell } from './exportTrait.js';
export { getMeta, setMeta } from './meta.js';
export { excludePlot, includePlot, excludePlotByLabel, findPlotByLabel, listPlots, type PlotRow } from './plots.js';
export {
  saveAnalysis,
  loadAnalysis,
  loadAnalysisHead,
  loadAnalysisSummary,
  listAnalyses,
  renameAnalysis,
  deleteAnalysis,
  type SaveAnalysisOptions,
  type StoredAnalysis,
  type AnalysisStatus,
  type AnalysisListing,
} from './analyses.js';
export { hasTrialRows, listAnalysisTrials, findAnalysisTrial, trialIdByLabel, trialDataSha256, storedTrialSummary, type AnalysisTrialRow } from './analysisTrials.js';
export { setSiteDetails, type SiteDetails } from './sites.js';
