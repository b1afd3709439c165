// One shape for an analysis on screen, whether it just ran or was reopened from the workspace
// (a saved analysis opens from its stored rows, without recomputing).
import type { CompactAnalysisReport, CompactPooledEntry, Provenance, ReportSettings } from '../../src/api/analysis/report.js';
import type { StageAgreement } from '../../src/api/analysis/agreement.js';
import type { OneStageResult } from '../../src/engine/onestage/fitOneStage.js';
import type { RateResponseResult } from '../../src/engine/rate/types.js';
import type { TrialContrastSource } from './forest.js';

export type { CompactPooledEntry, RateResponseResult, StageAgreement, OneStageResult };

export interface ResultView {
  readonly analysisId: number | null;
  readonly name: string | null;
  readonly spec: Record<string, unknown>;
  readonly provenance: Provenance;
  readonly trait: string;
  readonly unit: string | null;
  readonly settings: ReportSettings;
  readonly contrastUnits: Readonly<Record<string, string | null>>;
  readonly pooled: readonly CompactPooledEntry[];
  readonly trials: readonly TrialContrastSource[];
  readonly oneStage: OneStageResult | null;
  readonly agreement: readonly StageAgreement[];
  readonly rateResponse: RateResponseResult | null;
  readonly warnings: readonly string[];
  readonly cautions: readonly string[];
}

export function viewFromReport(report: CompactAnalysisReport, spec: Record<string, unknown>, analysisId: number | null): ResultView {
  return {
    analysisId,
    name: null,
    spec,
    provenance: report.provenance,
    trait: report.trait,
    unit: report.unit,
    settings: report.settings,
    contrastUnits: report.contrastUnits,
    pooled: report.twoStage.pooled,
    trials: report.twoStage.trials as readonly TrialContrastSource[],
    oneStage: report.oneStage,
    agreement: report.agreement,
    rateResponse: report.rateResponse,
    warnings: report.warnings,
    cautions: report.cautions,
  };
}

/** A saved analysis as `analysis.open` returns it (results by kind, trials as stored rows). */
export function viewFromSaved(saved: { id: number; name?: string | null; spec: unknown; results: Record<string, unknown>; trials: readonly { summary: unknown }[] }): ResultView {
  const r = saved.results;
  const twoStage = (r.twoStage ?? { pooled: [] }) as { pooled: CompactPooledEntry[] };
  return {
    analysisId: saved.id,
    name: saved.name ?? null,
    spec: (saved.spec ?? {}) as Record<string, unknown>,
    provenance: r.provenance as Provenance,
    trait: String(r.trait ?? ''),
    unit: (r.unit as string | null) ?? null,
    settings: (r.settings as ReportSettings) ?? { transform: 'none', confidence: 0.95, threshold: 0 },
    contrastUnits: (r.contrastUnits as Record<string, string | null>) ?? {},
    pooled: twoStage.pooled ?? [],
    trials: saved.trials.map((t) => t.summary as TrialContrastSource),
    oneStage: (r.oneStage as OneStageResult | null) ?? null,
    agreement: (r.agreement as StageAgreement[]) ?? [],
    rateResponse: (r.rateResponse as RateResponseResult | null) ?? null,
    warnings: (r.warnings as string[]) ?? [],
    cautions: (r.cautions as string[]) ?? [],
  };
}
