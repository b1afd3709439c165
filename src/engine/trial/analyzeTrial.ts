// Stage 1 for one trial: the design's linear model fitted by QR, the sequential ANOVA,
// adjusted treatment means with their covariance, the requested contrasts, optional
// pairwise comparisons and the diagnostics — one plain-JSON result.
import type { TrialInput, TreatmentInfo } from '../types.js';
import type { ResolvedContrast } from '../contrasts/resolve.js';
import type { AdjustedMean, TrialAnalysis, TrialAnalysisOptions, TrialFlag, PlotDiagnostic, AliasedColumn } from './types.js';
import { splitPlots } from './usablePlots.js';
import { makeTransform } from './transform.js';
import { buildDesignModel } from './modelMatrix.js';
import { factorDesign, fitLinear, type DesignFactor } from './linearFit.js';
import type { DesignModel } from './modelMatrix.js';
import type { UsedPlot } from './usablePlots.js';
import type { TrialDesign } from '../types.js';
import { meanVectors, rawMeans, meansCovariance } from './adjustedMeans.js';
import { estimateContrast } from './contrastEstimates.js';
import { pairDifferences, pairwiseComparisons } from './pairwise.js';
import { sequentialAnova, leastSignificantDifference } from './sequentialAnova.js';
import { residualDiagnostics } from './residualDiagnostics.js';
import { brownForsythe } from './brownForsythe.js';
import { spatialCheck } from './spatialCheck.js';
import { buildFlags } from './flags.js';
import { TrialInputError } from './errors.js';
import { num } from '../jsonSafe.js';
import { summarisePlotColumns } from './plotSummary.js';

export { TrialInputError } from './errors.js';
export type * from './types.js';

/** The percentage transforms on a trait not recorded as a percentage deserve a word. */
function transformSuitability(options: TrialAnalysisOptions): TrialFlag[] {
  const percentOnly = options.transform === 'logit' || options.transform === 'arcsine-sqrt';
  if (percentOnly && options.traitKind !== undefined && options.traitKind !== 'percent')
    return [{ code: 'transform-unsuited', message: `The ${options.transform} transform is meant for percentages (0–100), but this trait is recorded as ${options.traitKind}.` }];
  return [];
}

/**
 * Trials laid out alike (same design, treatments, and plots' treatment, block, row and column in
 * the same order) share the model matrix and its factorisation: computed once, the same numbers.
 */
const layouts = new Map<string, { model: DesignModel; factor: DesignFactor }>();
const LAYOUT_LIMIT = 256;

/** The layout used last, with what it was looked up by: consecutive trials are mostly laid out alike. */
let last: { design: TrialDesign; codes: readonly string[]; plots: readonly (readonly unknown[])[]; layout: { model: DesignModel; factor: DesignFactor } } | null = null;

const sameValues = (a: readonly unknown[], b: readonly unknown[]): boolean => a.length === b.length && a.every((x, i) => x === b[i]);

function designFor(design: TrialDesign, plots: readonly UsedPlot[], codes: readonly string[]): { model: DesignModel; factor: DesignFactor } {
  // Equal values give an equal key below, so a match here is the layout the key would find.
  if (last && last.design === design && last.plots.length === plots.length && sameValues(last.codes, codes) && plots.every((p, i) => {
    const q = last!.plots[i];
    return q[0] === p.treatment && q[1] === p.block && q[2] === p.row && q[3] === p.col;
  }))
    return last.layout;
  const layout = layoutByKey(design, plots, codes);
  last = { design, codes, plots: plots.map((p) => [p.treatment, p.block, p.row, p.col]), layout };
  return layout;
}

function layoutByKey(design: TrialDesign, plots: readonly UsedPlot[], codes: readonly string[]): { model: DesignModel; factor: DesignFactor } {
  let key = `${design}\u0002${codes.join('\u0001')}`;
  for (const p of plots) key += `\u0002${p.treatment}\u0001${p.block}\u0001${p.row}\u0001${p.col}`;
  let layout = layouts.get(key);
  if (!layout) {
    const model = buildDesignModel(design, plots, codes);
    layout = { model, factor: factorDesign(model.x) };
    if (layouts.size >= LAYOUT_LIMIT) layouts.clear();
    layouts.set(key, layout);
  }
  return layout;
}

/** Studentised residuals beyond this (in absolute value) are flagged as possible outliers. */
export const OUTLIER_THRESHOLD = 3.5;

export function analyzeTrial(
  trial: TrialInput,
  treatments: readonly TreatmentInfo[],
  contrasts: readonly ResolvedContrast[],
  options: TrialAnalysisOptions,
): TrialAnalysis {
  if (!(options.confidence > 0 && options.confidence < 1)) throw new TrialInputError(trial.trial, `confidence must be between 0 and 1; got ${options.confidence}`);
  const split = splitPlots(trial, treatments);
  const plots = split.used;
  if (plots.length === 0) throw new TrialInputError(trial.trial, 'no plot has a value to analyse');
  const transform = makeTransform(options.transform, plots.map((p) => p.value), trial.trial, options.logOffset);
  const y = new Float64Array(plots.length);
  for (let i = 0; i < plots.length; i++) y[i] = transform.forward(plots[i].value);
  const codes = treatments.map((t) => t.code);

  const { model, factor } = designFor(trial.design, plots, codes);
  const fit = fitLinear(model.x, y, factor);
  const mv = meanVectors(model, fit, codes);
  const raw = rawMeans(mv, fit, options.confidence);
  const cov = meansCovariance(mv, fit);
  const pairs = pairDifferences(mv, fit);
  const lsd = leastSignificantDifference(pairs.map((p) => p.se), fit.residualDf);
  const anova = sequentialAnova(model, fit, y, lsd, options.transform !== 'none');

  const counts = new Map<string, number>();
  for (const p of plots) counts.set(p.treatment, (counts.get(p.treatment) ?? 0) + 1);
  const transformed = options.transform !== 'none';
  const means: AdjustedMean[] = codes.map((code, i) => ({
    treatment: code,
    estimable: mv.estimable[i],
    estimate: num(raw[i].estimate),
    se: num(raw[i].se),
    lower: num(raw[i].lower),
    upper: num(raw[i].upper),
    n: counts.get(code) ?? 0,
    backTransformed:
      transformed && mv.estimable[i]
        ? { estimate: num(transform.back(raw[i].estimate)), lower: num(transform.back(raw[i].lower)), upper: num(transform.back(raw[i].upper)) }
        : null,
  }));

  const contrastResults = contrasts.map((c) => estimateContrast(c, mv, fit, options.confidence, options.transform, treatments));
  const estimableCount = mv.estimable.filter(Boolean).length;
  const pairwise = options.pairwise === 'none' ? null : pairwiseComparisons(options.pairwise, pairs, estimableCount, fit.residualDf, options.confidence, options.transform === 'log');

  const rd = residualDiagnostics(fit);
  const plotDiagnostic = (p: UsedPlot, i: number): PlotDiagnostic => ({
    plotId: p.plotId ?? null,
    label: p.label ?? null,
    sourceRow: p.sourceRow ?? null,
    treatment: p.treatment,
    block: p.block,
    row: p.row,
    col: p.col,
    value: y[i],
    fitted: fit.fitted[i],
    residual: fit.residuals[i],
    standardized: num(rd.standardized[i]),
    studentized: num(rd.studentized[i]),
    leverage: rd.leverage[i],
    cooksDistance: num(rd.cooks[i]),
    normalScore: num(rd.normalScores[i]),
  });
  const listPlots = options.listPlots !== false;
  const plotDiagnostics: PlotDiagnostic[] = listPlots ? plots.map(plotDiagnostic) : [];
  const bf = brownForsythe(fit.residuals, plots.map((p) => p.treatment));
  const spatial = spatialCheck(trial.design, plots, model.x, y, fit);
  const cooksThreshold = 4 / plots.length;

  const aliased: AliasedColumn[] = fit.qr.pivot.slice(fit.qr.rank).map((j) => ({ term: model.terms[model.assign[j]].name, level: model.columnLevels[j] }));
  const flags: TrialFlag[] = [
    ...transform.flags,
    ...transformSuitability(options),
    ...buildFlags({
      // Summarised only: the outlying plots alone are made (their flags are kept), and no
      // influential-plot flag (the summary counts them, plotSummary.ts).
      plots: listPlots ? plotDiagnostics : outlyingPlots(rd.studentized).map((i) => plotDiagnostic(plots[i], i)),
      outlierThreshold: OUTLIER_THRESHOLD,
      cooksThreshold: listPlots ? cooksThreshold : Infinity,
      brownForsythe: bf,
      spatial,
      aliased,
      missing: split.missing.length,
      excluded: split.excluded.length,
      absent: codes.filter((c) => !counts.has(c)),
      residualDf: fit.residualDf,
    }),
  ];

  return {
    trial: trial.trial,
    transform: transform.record,
    model: {
      design: trial.design,
      terms: model.terms,
      n: plots.length,
      parameters: model.x.cols,
      rank: fit.qr.rank,
      residualDf: fit.residualDf,
      sigma: num(Math.sqrt(fit.sigma2)),
      coefficients: model.columnLevels.map((level, j) => ({
        column: j === 0 ? level : `${model.terms[model.assign[j]].name}:${level}`,
        estimate: num(fit.coefficients[j]),
      })),
    },
    anova,
    means,
    meansCovariance: { treatments: codes, matrix: cov.map((r) => r.map(num)) },
    contrasts: contrastResults,
    pairwise,
    diagnostics: { plots: plotDiagnostics, outlierThreshold: OUTLIER_THRESHOLD, cooksThreshold: num(cooksThreshold), brownForsythe: bf, spatial },
    flags,
    excluded: split.excluded,
    missing: split.missing,
    aliased,
    ...(listPlots ? {} : { plotSummary: summarisePlotColumns(rd.studentized, rd.cooks, cooksThreshold) }),
  };
}

/** Plots whose studentised residual buildFlags reports as an outlier. */
function outlyingPlots(studentized: Float64Array): number[] {
  const out: number[] = [];
  for (let i = 0; i < studentized.length; i++) {
    const s = num(studentized[i]);
    if (s !== null && Math.abs(s) > OUTLIER_THRESHOLD) out.push(i);
  }
  return out;
}
