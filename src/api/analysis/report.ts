// The machine-readable result of one analysis (DESIGN §5). Screens, reports and the CLI all
// read this one object.
import type { TrialAnalysis } from '../../engine/trial/analyzeTrial.js';
import type { PooledResult } from '../../engine/pooling/poolEstimates.js';
import type { OneStageResult } from '../../engine/onestage/fitOneStage.js';
import type { RateResponseResult } from '../../engine/rate/analyzeRateResponse.js';
import type { StageAgreement } from './agreement.js';
import type { TrialSummary } from '../../engine/trial/trialSummary.js';
import type { CompactPooledResult } from '../../engine/pooling/compactPooled.js';
import type { SiteLevelPooling } from '../../engine/pooling/multilevel/types.js';

/**
 * How much of each trial a report carries: 'summary' (the default) gives per trial its contrasts,
 * means, ANOVA rows, flags and diagnostic summaries, and the per-trial pooling tables column by
 * column; 'plots' gives every trial's full analysis with the per-plot diagnostics, and the
 * pooling tables row by row.
 */
export type ReportDetail = 'summary' | 'plots';

export type TrialStageEntry = TrialAnalysis & {
  readonly trial: string;
  readonly site: string | null;
  readonly year: number | null;
  readonly design: string;
};

export type PooledEntry = PooledResult & {
  readonly name: string;
  readonly meaning: string;
  /** Trials left out of this contrast's pooling, each with the reason. */
  readonly leftOut: readonly string[];
  /** Trials nested in sites (twoStage.levels "site-and-trial"), pooled from the same trial estimates. */
  readonly siteLevels?: SiteLevelPooling;
};

/** A trial known only by its per-trial summary (pooling a summary file). */
export interface SummaryTrialEntry {
  readonly trial: string;
  readonly contrasts: readonly { readonly name: string; readonly estimate: number; readonly se: number; readonly df: number | null }[];
}

export interface Provenance {
  readonly source: string;
  readonly dataFingerprint: string;
  readonly appVersion: string;
  readonly createdAt: string;
}

/** The spec's settings every reader of the numbers needs beside them. */
export interface ReportSettings {
  readonly transform: string;
  readonly confidence: number;
  /** Break-even effect for the probability above the threshold, in the effects' units. */
  readonly threshold: number;
}

export type CompactPooledEntry = CompactPooledResult<PooledEntry>;

/** The report with every trial's full analysis (`detail: 'plots'`). */
export interface AnalysisReport {
  readonly detail?: 'plots';
  readonly provenance: Provenance;
  readonly trait: string;
  readonly unit: string | null;
  readonly settings: ReportSettings;
  /** Unit of each contrast's effect (null when the trait has no unit recorded). */
  readonly contrastUnits: Readonly<Record<string, string | null>>;
  readonly trialsAnalysed: number;
  readonly oneStage: OneStageResult | null;
  readonly twoStage: { readonly trials: readonly (TrialStageEntry | SummaryTrialEntry)[]; readonly pooled: readonly PooledEntry[] };
  readonly agreement: readonly StageAgreement[];
  readonly rateResponse: RateResponseResult | null;
  readonly warnings: readonly string[];
  readonly cautions: readonly string[];
}

/** The default, compact report (`detail: 'summary'`): the same numbers, per trial in summary. */
export interface CompactAnalysisReport extends Omit<AnalysisReport, 'detail' | 'twoStage'> {
  readonly detail: 'summary';
  readonly twoStage: { readonly trials: readonly (TrialSummary | SummaryTrialEntry)[]; readonly pooled: readonly CompactPooledEntry[] };
}

export type ReportOf<D extends ReportDetail> = D extends 'plots' ? AnalysisReport : CompactAnalysisReport;
export type AnyAnalysisReport = AnalysisReport | CompactAnalysisReport;
