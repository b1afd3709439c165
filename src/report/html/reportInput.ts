// What the report is written from: the compact analysis document (every number), the spec that
// produced it, and facts about the data that the analysis document does not carry (sites with
// positions, exclusions with reasons, the imported files with their hashes).
import type { CompactAnalysisReport } from '../../api/analysis/report.js';
import type { TrialSummary } from '../../engine/trial/trialSummary.js';
import type { ForestData, RateData } from '../charts/chartData.js';

export interface ReportSite {
  readonly code: string;
  readonly name: string;
  readonly lat: number | null;
  readonly lon: number | null;
  readonly trials: number;
}

export interface ReportImport {
  readonly file: string;
  readonly sha256: string;
  readonly rowsStored: number;
  readonly createdAt: string;
}

export interface ReportExclusion {
  readonly trial: string;
  readonly plot: string;
  readonly reason: string;
  /** 'workspace' (recorded with the plot) or 'spec' (listed in the spec's exclude). */
  readonly source: 'workspace' | 'spec';
}

export interface ReportInput {
  readonly analysis: CompactAnalysisReport;
  readonly spec: unknown;
  /** The workspace file or data file the numbers came from, as named on the command line. */
  readonly sourceLabel: string;
  readonly sites: readonly ReportSite[];
  readonly imports: readonly ReportImport[];
  readonly exclusions: readonly ReportExclusion[];
  /** The saved analysis this report re-ran, with whether the data fingerprint matched. */
  readonly savedAnalysis: { readonly id: number; readonly fingerprint: string; readonly createdAt: string } | null;
  readonly generatedAt: string;
}

/** The per-trial entries of a workspace or data-file analysis (a summary file has none of these fields). */
export function trialSummaries(a: CompactAnalysisReport): { entry: TrialSummary; index: number }[] {
  const out: { entry: TrialSummary; index: number }[] = [];
  a.twoStage.trials.forEach((t, index) => {
    if ('design' in t) out.push({ entry: t, index });
  });
  return out;
}

/** The charts, drawn to SVG text by the shared chart components (loaded by ./loadCharts.ts). */
export interface ReportCharts {
  forest(data: ForestData): string;
  rate(data: RateData): string;
}
