// Pooling per-trial summaries (estimate and SE per trial, e.g. from published reports)
// without a trial stage.
import { poolEstimates } from '../../engine/pooling/poolEstimates.js';
import type { SummaryRow } from '../../intake/index.js';
import { twoStageSchema, type AnalysisSpec } from '../../spec/analysisSpec.js';
import { compactPooled } from '../../engine/pooling/compactPooled.js';
import { ManyfieldError } from '../result.js';
import type { ReportDetail, ReportOf } from './report.js';

export function poolSummaryRows<D extends ReportDetail>(rows: readonly SummaryRow[], spec: AnalysisSpec, detail: D): Omit<ReportOf<D>, 'provenance'> {
  const name = spec.contrasts[0]?.name ?? spec.trait ?? 'estimate';
  const options = spec.twoStage ?? twoStageSchema.parse({});
  if (rows.length === 0)
    throw new ManyfieldError('invalid-input', `contrast "${name}": nothing to pool — the summary file has no trial row with both an estimate and a standard error; fill in at least one trial's estimate and SE (columns named by spec.columns.estimate and spec.columns.se)`);
  const result = poolEstimates(
    rows.map((r) => ({ trial: r.trial, estimate: r.estimate, se: r.se, df: r.df, covariates: r.covariates })),
    { tau2: options.tau2, interval: options.interval, hksjFloor: options.hksjFloor, confidence: spec.confidence, threshold: spec.threshold, moderators: spec.moderators, prediction: options.prediction, predictionDraws: options.predictionDraws, predictionSeed: options.predictionSeed },
  );
  const pooled = { name, meaning: 'pooled per-trial summaries as given in the file', leftOut: [], ...result };
  const body = {
    trait: spec.trait ?? name,
    unit: null,
    settings: { transform: spec.transform, confidence: spec.confidence, threshold: spec.threshold },
    contrastUnits: { [name]: null },
    trialsAnalysed: rows.length,
    oneStage: null,
    twoStage: {
      trials: rows.map((r) => ({ trial: r.trial, contrasts: [{ name, estimate: r.estimate, se: r.se, df: r.df }] })),
      pooled: [pooled],
    },
    agreement: [],
    rateResponse: null,
    warnings: [],
    cautions: [],
  };
  const shaped = detail === 'plots' ? { detail, ...body } : { detail, ...body, twoStage: { ...body.twoStage, pooled: [compactPooled(pooled)] } };
  // `shaped` is the report of detail D (the branch above follows D); TypeScript cannot narrow a generic.
  return shaped as unknown as Omit<ReportOf<D>, 'provenance'>;
}
