// Options and result shapes of the per-trial analysis. The result is plain JSON: numbers,
// strings, booleans, arrays, objects and null (a number that is not finite becomes null).
import type { TrialDesign } from '../types.js';
import type { PlotSummary } from './plotSummary.js';
import type { ContrastKind } from '../contrasts/resolve.js';

export type TransformKind = 'none' | 'log' | 'logit' | 'arcsine-sqrt' | 'sqrt';

export interface TrialAnalysisOptions {
  readonly transform: TransformKind;
  /** Offset added before the log; when absent, see the rule in transform.ts. */
  readonly logOffset?: number;
  /** Confidence level of every interval, e.g. 0.95. */
  readonly confidence: number;
  readonly pairwise: 'none' | 'tukey' | 'holm';
  readonly traitKind?: 'continuous' | 'percent' | 'count';
  /**
   * false: the trial is only summarised (detail 'summary'): no per-plot diagnostics are listed
   * (diagnostics.plots is empty), no influential-plot flags are written, and plotSummary carries
   * what the summary reads of them. Default true: the full analysis.
   */
  readonly listPlots?: boolean;
}

/** A number that may be undefined in this trial (JSON has no NaN). */
export type Num = number | null;

export type FlagCode =
  | 'outlier-residual'
  | 'influential-plot'
  | 'unequal-variances'
  | 'spatial-trend'
  | 'aliased-terms'
  | 'missing-plots'
  | 'excluded-plots'
  | 'log-offset-applied'
  | 'percent-boundary-adjusted'
  | 'treatment-absent'
  | 'no-error-df'
  | 'transform-unsuited';

export interface TrialFlag {
  readonly code: FlagCode;
  /** Plain-language explanation with the advice that follows from it. */
  readonly message: string;
  readonly plotId?: string | number | null;
  /** The field's plot label, when the data had one. */
  readonly label?: string | null;
  readonly treatment?: string;
}

export interface TransformRecord {
  readonly kind: TransformKind;
  /** Offset added before the log (0 when none was needed), else null. */
  readonly logOffset: Num;
  /** Smithson–Verkuilen compression size n for logit at 0 % or 100 %, else null. */
  readonly percentCompressionN: Num;
  readonly note: string;
}

export interface ModelTerm {
  readonly name: string;
  readonly role: 'intercept' | 'block' | 'row' | 'col' | 'treatment';
  /** Levels of the factor in the order used for its columns (the first is the reference). */
  readonly levels: readonly string[];
  /** Number of model-matrix columns for this term. */
  readonly columns: number;
}

export interface ModelSummary {
  readonly design: TrialDesign;
  readonly terms: readonly ModelTerm[];
  /** Plots used in the fit. */
  readonly n: number;
  readonly parameters: number;
  readonly rank: number;
  readonly residualDf: number;
  /** Residual standard deviation on the analysis scale. */
  readonly sigma: Num;
  readonly coefficients: readonly { readonly column: string; readonly estimate: Num }[];
}

export interface AliasedColumn {
  readonly term: string;
  readonly level: string;
}

export interface AnovaRow {
  readonly term: string;
  readonly df: number;
  readonly ss: number;
  readonly ms: Num;
  readonly f: Num;
  readonly p: Num;
}

export interface LsdRecord {
  readonly value: Num;
  /** Standard error of a difference used (the average over all pairs when unbalanced). */
  readonly sed: Num;
  readonly basis: 'common' | 'average';
  readonly note: string;
}

export interface AnovaTable {
  /** Sequential (type I) sums of squares, treatments fitted after blocks / rows / columns. */
  readonly rows: readonly AnovaRow[];
  readonly residual: { readonly df: number; readonly ss: number; readonly ms: Num };
  readonly total: { readonly df: number; readonly ss: number };
  readonly grandMean: Num;
  /** Coefficient of variation in %, on the analysis scale; null under a transformation. */
  readonly cv: Num;
  readonly lsd5: LsdRecord;
}

export interface BackTransformed {
  readonly estimate: Num;
  readonly lower: Num;
  readonly upper: Num;
}

export interface AdjustedMean {
  readonly treatment: string;
  readonly estimable: boolean;
  readonly estimate: Num;
  readonly se: Num;
  readonly lower: Num;
  readonly upper: Num;
  /** Plots of this treatment used in the fit. */
  readonly n: number;
  /** On the original scale (the interval end points back-transformed); null without a transform. */
  readonly backTransformed: BackTransformed | null;
}

export interface RatioRecord {
  /** exp(estimate): the ratio of the (geometric) means, per unit for a slope. */
  readonly ratio: Num;
  readonly lower: Num;
  readonly upper: Num;
  readonly percentChange: Num;
  readonly percentLower: Num;
  readonly percentUpper: Num;
  readonly meaning: string;
}

export interface EstimableContrast {
  readonly name: string;
  readonly kind: ContrastKind;
  readonly estimable: true;
  readonly estimate: Num;
  readonly se: Num;
  readonly df: number;
  readonly t: Num;
  readonly p: Num;
  readonly lower: Num;
  readonly upper: Num;
  readonly confidence: number;
  readonly coefficients: Readonly<Record<string, number>>;
  readonly divisor: number;
  readonly meaning: string;
  /** 'analysis' = the transformed scale when a transform is used. */
  readonly scale: 'original' | 'analysis';
  /** Log transform only, for differences of averages and linear slopes. */
  readonly ratio: RatioRecord | null;
}

export interface NotEstimableContrast {
  readonly name: string;
  readonly kind: ContrastKind;
  readonly estimable: false;
  readonly reason: string;
}

export type TrialContrast = EstimableContrast | NotEstimableContrast;

export interface PairwiseComparison {
  readonly first: string;
  readonly second: string;
  readonly difference: Num;
  readonly se: Num;
  readonly t: Num;
  readonly pUnadjusted: Num;
  readonly pAdjusted: Num;
  readonly lower: Num;
  readonly upper: Num;
  readonly ratio: RatioRecord | null;
}

export interface PairwiseResult {
  readonly method: 'tukey' | 'holm';
  readonly df: number;
  readonly confidence: number;
  /** Multiplier of the SE giving the interval half-width. */
  readonly criticalValue: Num;
  readonly note: string;
  readonly comparisons: readonly PairwiseComparison[];
}

export interface PlotDiagnostic {
  readonly plotId: string | number | null;
  /** The field's plot label (null when the data had no plot column). */
  readonly label: string | null;
  /** The plot's row in its file, when known. */
  readonly sourceRow: number | null;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  /** Analysed value (transformed scale when a transform is used). */
  readonly value: number;
  readonly fitted: number;
  readonly residual: number;
  /** Internally studentised residual (residual / (sigma sqrt(1 - h))). */
  readonly standardized: Num;
  /** Externally studentised (deleted) residual; flagged beyond 3.5 in absolute value. */
  readonly studentized: Num;
  readonly leverage: number;
  readonly cooksDistance: Num;
  /** Normal score of the standardised residual for a QQ plot (Blom-type plotting positions). */
  readonly normalScore: Num;
}

export interface FTestRecord {
  readonly available: boolean;
  readonly reason?: string;
  readonly df1: number;
  readonly df2: number;
  readonly f: Num;
  readonly p: Num;
}

export interface SpatialCheck {
  readonly available: boolean;
  readonly reason?: string;
  readonly joint: FTestRecord | null;
  readonly rows: FTestRecord | null;
  readonly cols: FTestRecord | null;
  readonly flagged: boolean;
}

export interface TrialDiagnostics {
  readonly plots: readonly PlotDiagnostic[];
  readonly outlierThreshold: number;
  readonly cooksThreshold: Num;
  readonly brownForsythe: FTestRecord;
  readonly spatial: SpatialCheck;
}

export interface ExcludedPlot {
  readonly plotId: string | number | null;
  readonly label: string | null;
  readonly treatment: string;
  readonly reason: string;
}

export interface TrialAnalysis {
  readonly trial: string;
  readonly transform: TransformRecord;
  readonly model: ModelSummary;
  readonly anova: AnovaTable;
  readonly means: readonly AdjustedMean[];
  readonly meansCovariance: { readonly treatments: readonly string[]; readonly matrix: readonly (readonly Num[])[] };
  readonly contrasts: readonly TrialContrast[];
  readonly pairwise: PairwiseResult | null;
  readonly diagnostics: TrialDiagnostics;
  readonly flags: readonly TrialFlag[];
  readonly excluded: readonly ExcludedPlot[];
  /** Plots whose value is missing (null). */
  readonly missing: readonly { readonly plotId: string | number | null; readonly label: string | null; readonly treatment: string }[];
  readonly aliased: readonly AliasedColumn[];
  /** Only when analysed with listPlots: false (plotSummary.ts). */
  readonly plotSummary?: PlotSummary;
}
