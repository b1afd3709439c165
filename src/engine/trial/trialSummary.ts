// The compact form of one trial's analysis: what a table of thousands of trials needs (its
// contrasts, adjusted means, ANOVA rows, flag codes and diagnostic summaries), without the
// per-plot diagnostics, the means' covariance or the model's coefficients. Every number is
// copied from the full analysis unchanged; the full form is recomputed or read on demand.
import type { Num, PairwiseResult, TrialAnalysis, TrialFlag, TransformRecord } from './types.js';

export interface TrialSummaryMean {
  readonly treatment: string;
  readonly estimate: Num;
  readonly se: Num;
  /** Plots of this treatment used in the fit. */
  readonly n: number;
}

export type TrialSummaryContrast =
  | {
      readonly name: string;
      readonly estimable: true;
      readonly estimate: Num;
      readonly se: Num;
      readonly df: number;
      readonly p: Num;
      readonly lower: Num;
      readonly upper: Num;
      /**
       * For a trend or a factor comparison, what this trial's contrast was fitted on (its own
       * rates, the combinations it tested at both levels). In an analysis's summary report it is
       * left out where it is the pooled contrast's meaning (twoStage.pooled[].meaning), as it is
       * in every trial that tested the whole protocol: thousands of copies of one sentence.
       */
      readonly meaning?: string;
    }
  | { readonly name: string; readonly estimable: false; readonly reason: string };

export interface TrialDiagnosticSummary {
  /** Largest |externally studentised residual| over the plots (flagged beyond outlierThreshold). */
  readonly maxAbsStudentized: Num;
  /** Largest Cook's distance over the plots (flagged above cooksThreshold = 4 / n). */
  readonly maxCooksDistance: Num;
  readonly outlierThreshold: number;
  readonly cooksThreshold: Num;
  /** Plots with Cook's distance above cooksThreshold (each an influential-plot flag in the detail). */
  readonly influentialPlots: number;
  /** Brown–Forsythe test of equal residual spread across treatments. */
  readonly unequalVariancesP: Num;
  /** Joint row/column trend test; null when the plots carry no positions. */
  readonly spatialTrendP: Num;
}

export interface TrialSummary {
  readonly trial: string;
  readonly site: string | null;
  readonly year: number | null;
  readonly design: string;
  /** Present only when the analysis used a transformation. */
  readonly transform?: TransformRecord;
  /** Plots used in the fit. */
  readonly n: number;
  readonly residualDf: number;
  /** Residual standard deviation on the analysis scale. */
  readonly sigma: Num;
  readonly means: readonly TrialSummaryMean[];
  readonly contrasts: readonly TrialSummaryContrast[];
  readonly anova: {
    readonly rows: readonly { readonly term: string; readonly df: number; readonly f: Num; readonly p: Num }[];
    readonly residual: { readonly df: number; readonly ms: Num };
    readonly grandMean: Num;
    readonly cv: Num;
  };
  /**
   * The trial's flags, except the loose influential-plot screen (Cook's distance above 4/n,
   * raised for several plots in most trials): those are counted in
   * diagnostics.influentialPlots and listed one by one in the trial's detail.
   */
  readonly flags: readonly TrialFlag[];
  readonly diagnostics: TrialDiagnosticSummary;
  /** The pairwise comparisons, when the spec asked for them (small: one row per pair). */
  readonly pairwise?: PairwiseResult;
  /** Plots excluded by the user and plots with no value. */
  readonly excluded: number;
  readonly missing: number;
}

type Identified = TrialAnalysis & { readonly site: string | null; readonly year: number | null; readonly design: string };

/** `sharedMeanings`: contrast name to the meaning its pool carries; a trial's equal meaning is left out. */
export function summariseTrial(t: Identified, sharedMeanings?: ReadonlyMap<string, string>): TrialSummary {
  let maxStudentized: number | null = null;
  let maxCooks: number | null = null;
  for (const p of t.diagnostics.plots) {
    if (p.studentized !== null && (maxStudentized === null || Math.abs(p.studentized) > maxStudentized)) maxStudentized = Math.abs(p.studentized);
    if (p.cooksDistance !== null && (maxCooks === null || p.cooksDistance > maxCooks)) maxCooks = p.cooksDistance;
  }
  // A trial analysed to be summarised carries these from its diagnostic columns (plotSummary.ts).
  if (t.plotSummary) ({ maxAbsStudentized: maxStudentized, maxCooksDistance: maxCooks } = t.plotSummary);
  return {
    trial: t.trial,
    site: t.site,
    year: t.year,
    design: t.design,
    ...(t.transform.kind === 'none' ? {} : { transform: t.transform }),
    n: t.model.n,
    residualDf: t.model.residualDf,
    sigma: t.model.sigma,
    means: t.means.map((m) => ({ treatment: m.treatment, estimate: m.estimate, se: m.se, n: m.n })),
    contrasts: t.contrasts.map((c) =>
      c.estimable
        ? { name: c.name, estimable: true, estimate: c.estimate, se: c.se, df: c.df, p: c.p, lower: c.lower, upper: c.upper, ...((c.kind === 'trend' || c.kind === 'factor-levels') && sharedMeanings?.get(c.name) !== c.meaning ? { meaning: c.meaning } : {}) }
        : { name: c.name, estimable: false, reason: c.reason },
    ),
    anova: {
      rows: t.anova.rows.map((r) => ({ term: r.term, df: r.df, f: r.f, p: r.p })),
      residual: { df: t.anova.residual.df, ms: t.anova.residual.ms },
      grandMean: t.anova.grandMean,
      cv: t.anova.cv,
    },
    flags: t.flags.filter((f) => f.code !== 'influential-plot'),
    diagnostics: {
      maxAbsStudentized: maxStudentized,
      maxCooksDistance: maxCooks,
      outlierThreshold: t.diagnostics.outlierThreshold,
      cooksThreshold: t.diagnostics.cooksThreshold,
      influentialPlots: t.plotSummary ? t.plotSummary.influentialPlots : t.flags.filter((f) => f.code === 'influential-plot').length,
      unequalVariancesP: t.diagnostics.brownForsythe.available ? t.diagnostics.brownForsythe.p : null,
      spatialTrendP: t.diagnostics.spatial.available ? (t.diagnostics.spatial.joint?.p ?? null) : null,
    },
    ...(t.pairwise ? { pairwise: t.pairwise } : {}),
    excluded: t.excluded.length,
    missing: t.missing.length,
  };
}

/** Whether a stored or reported trial entry is the full analysis (with per-plot diagnostics). */
export function isFullTrialAnalysis(entry: object): entry is Identified {
  return 'diagnostics' in entry && Array.isArray((entry as { diagnostics: { plots?: unknown } }).diagnostics.plots);
}
