// The data the shared charts draw (renderer/charts/shared/), as plain types. They live here so
// both the report (src/report/html) and the screens (renderer/, by type-only imports) use one
// definition; the components themselves are built for the report by scripts/bundle.js.

/** One trial's contrast estimate with its interval; weightShare is its share of the pooled weight (0 to 1). */
export interface ForestRow {
  readonly trial: string;
  readonly site: string;
  readonly year: number | string;
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
  readonly weightShare: number;
}

export interface ForestData {
  /** Sorted and grouped by the caller; drawn top to bottom in this order. */
  readonly rows: readonly ForestRow[];
  readonly pooled: { readonly estimate: number; readonly lower: number; readonly upper: number } | null;
  /** The interval expected at a new site; null when it cannot be computed (fewer than 3 trials). */
  readonly prediction: { readonly lower: number; readonly upper: number } | null;
  /** Break-even effect drawn as a dashed line; null (or 0) draws only the line at zero. */
  readonly threshold: number | null;
  readonly unit: string | null;
  readonly width: number;
  /** Decimals of the numbers printed beside the rows (default: from the axis range). */
  readonly decimals?: number;
}

export interface RatePoint {
  readonly rate: number;
  readonly value: number;
}

export interface RateCurveData {
  readonly id: string;
  readonly label: string;
  readonly points: readonly RatePoint[];
}

export interface RateData {
  readonly width: number;
  readonly rateUnit: string | null;
  readonly yieldUnit: string | null;
  /** Each trial's fitted yield gain over its own tested rates (drawn thin). */
  readonly trials: readonly RateCurveData[];
  /** The pooled (mean) yield-gain curve over the rates tested in every trial. */
  readonly pooled: RateCurveData | null;
  /** Net return of the pooled curve against rate (yield units: gain less price ratio × rate). */
  readonly netReturn: readonly RatePoint[];
  readonly optimum: { readonly rate: number; readonly lower: number | null; readonly upper: number | null } | null;
  /** Rates whose mean net return is within the spec's margin of the best. */
  readonly profitable: { readonly lower: number; readonly upper: number } | null;
}
