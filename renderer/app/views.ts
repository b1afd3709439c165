// The result shapes the screens read, named once from the handler map's types.
import type { HandlerResults } from '../host/types.js';

export type WorkspaceInfo = HandlerResults['workspace.describe'];
export type SiteEntry = HandlerResults['sites.list'][number];
export type TrialOverview = HandlerResults['trials.overview'][number];
export type TrialDetail = HandlerResults['trial.detail'];
export type PlotDetail = TrialDetail['plots'][number];
export type TrialAnalysis = NonNullable<TrialDetail['analysis']>;
export type ExclusionEntry = HandlerResults['exclusions.list'][number];
export type FilePreview = HandlerResults['data.preview'];
export type ValidationReport = HandlerResults['data.validate'];
export type ValidationProblem = ValidationReport['problems'][number];
export type ImportOutcome = HandlerResults['data.import'];
