// Shapes of the rate-response analysis: options in, a JSON-safe result out.
// Yields and net returns are in the trait's unit; rates in the rate factor's unit.
import type { MixedRateResult } from './mixed/types.js';
import type { RateRecommendation } from './recommendation.js';

export type RateModel = 'linear' | 'quadratic' | 'linear-plateau' | 'quadratic-plateau' | 'exponential';
export type RateModelChoice = RateModel | 'best';

export const RATE_MODELS: readonly RateModel[] = ['linear', 'quadratic', 'linear-plateau', 'quadratic-plateau', 'exponential'];

export interface RateResponseOptions {
  /** Name of the numeric factor holding the rate. */
  readonly factor: string;
  readonly model: RateModelChoice;
  /**
   * Input price per unit of rate divided by crop price per unit of yield, both in the
   * network's units: yield units gained per rate unit needed to break even.
   */
  readonly priceRatio: number;
  /** Level of each other factor to analyse at; absent = all treatments pooled over them. */
  readonly at?: Readonly<Record<string, string | number>>;
  /** Rates whose mean net return (yield units) is within this of the maximum are "profitable". */
  readonly profitableWithin: number;
  /** Bootstrap replicates over trials (0 = none). */
  readonly bootstrap: number;
  readonly seed: number;
  /** Confidence level of the optimum's interval, e.g. 0.95. */
  readonly confidence: number;
  /**
   * Optional prices to also report money. Both per the network's units (currency per rate
   * unit and per yield unit); their ratio must equal priceRatio.
   */
  readonly prices?: { readonly input: number; readonly crop: number; readonly currency?: string };
}

export interface RateResponseHooks {
  readonly onProgress?: (e: { stage: string; fraction: number }) => void;
  readonly signal?: AbortSignal;
}

/** Flags on an optimum: why it sits where it does. */
export type OptimumFlag =
  | 'above-tested-range'
  | 'below-tested-range'
  | 'no-input-pays'
  | 'convex-curve'
  | 'not-converged'
  | 'no-curve';

export type Num = number | null;

export interface AiccRow {
  readonly model: RateModel;
  /** Parameters counted: linear (intercept, block offsets, curve) + nonlinear + residual variance. */
  readonly parameters: number;
  readonly rss: Num;
  readonly logLik: Num;
  readonly aicc: Num;
  readonly deltaAicc: Num;
  readonly converged: boolean;
  readonly note: string | null;
}

export interface TrialRateResult {
  readonly trial: string;
  /** The model used for this trial's curve (null when none could be fitted). */
  readonly model: RateModel | null;
  /** Curve parameters; the intercept is the mean over blocks (sum-to-zero block offsets). */
  readonly params: Record<string, Num>;
  /** Asymptotic standard errors (s² (J'J)^-1, as R's summary of lm/nls; derived ones by the delta method). */
  readonly standardErrors: Record<string, Num>;
  /** Economic optimum rate for this trial, capped to its tested range. */
  readonly optimum: Num;
  /** The optimum before capping (closed form), null when it does not exist. */
  readonly unconstrainedOptimum: Num;
  readonly yieldGainAtOptimum: Num;
  readonly netReturnAtOptimum: Num;
  readonly converged: boolean;
  readonly convergence: { readonly method: string; readonly evaluations: number; readonly note: string | null };
  readonly flags: OptimumFlag[];
  readonly testedRange: [Num, Num];
  readonly plots: number;
  readonly rss: Num;
  readonly residualSd: Num;
  readonly aicTable?: AiccRow[];
}

export interface PooledRateResult {
  readonly optimum: Num;
  readonly optimumLower: Num;
  readonly optimumUpper: Num;
  readonly profitableLower: Num;
  readonly profitableUpper: Num;
  readonly netReturnAtOptimum: Num;
  readonly yieldGainAtOptimum: Num;
  /** How optimumLower/optimumUpper were obtained. */
  readonly method: string;
  readonly flags: OptimumFlag[];
  readonly trialsUsed: number;
  /** Rates over which the mean curve is maximised: the range tested in every trial used. */
  readonly range: [Num, Num];
  readonly delta: { readonly se: Num; readonly df: Num; readonly lower: Num; readonly upper: Num } | null;
  readonly bootstrap: { readonly replicates: number; readonly lower: Num; readonly upper: Num; readonly se: Num; readonly seed: number } | null;
  readonly money: { readonly currency: string | null; readonly netReturnAtOptimum: Num; readonly inputCostAtOptimum: Num } | null;
}

export interface SensitivityRow {
  readonly multiplier: number;
  readonly priceRatio: number;
  readonly optimum: Num;
  readonly profitableLower: Num;
  readonly profitableUpper: Num;
  readonly netReturnAtOptimum: Num;
  readonly yieldGainAtOptimum: Num;
  readonly shareNoInputPays: Num;
  readonly flags: OptimumFlag[];
}

export interface SiteOptima {
  readonly n: number;
  /** Quantiles of the trials' optima as reported (held inside each trial's tested range), R's default type 7. */
  readonly quantiles: { readonly p: number; readonly value: Num }[];
  readonly min: Num;
  readonly max: Num;
  /** Share of trials with a converged curve whose optimum is rate 0. */
  readonly shareNoInputPays: Num;
}

export interface RateResponseResult {
  readonly factor: string;
  readonly model: RateModelChoice;
  readonly priceRatio: number;
  readonly at: Record<string, string | number> | null;
  readonly rateUnit: string | null;
  readonly yieldUnit: string | null;
  readonly unitNote: string;
  /** The curve formulas, parameter names and optimum closed forms, with their sign conventions. */
  readonly curveForms: string[];
  readonly trials: TrialRateResult[];
  readonly pooled: PooledRateResult;
  readonly siteOptima: SiteOptima;
  readonly sensitivity: SensitivityRow[];
  readonly cautions: string[];
  readonly warnings: string[];
  /**
   * Mixed-model quadratic (random trial deviations of the coefficients, REML): present when
   * the model is 'quadratic' or 'best'; null when that fit failed (see warnings).
   */
  readonly mixedModel?: MixedRateResult | null;
  /** The one recommended optimum (pooled curve or mixed-model curve), the reason, and the other as a check. */
  readonly recommendation: RateRecommendation;
}

export const RATE_CAUTIONS: readonly string[] = [
  'These results summarise the trials in this workspace only. Rates must respect product label limits and local nutrient-management rules, and be confirmed by local agronomic advice.',
];

export const CURVE_FORMS: readonly string[] = [
  'Curves give yield at rate x, block offsets averaged out (intercept = mean over blocks); yield gain = f(x) - f(0); net return = gain - priceRatio * x (yield units); r = priceRatio.',
  'linear: f = intercept + slope x. Optimum: the top tested rate when slope > r, else 0.',
  'quadratic: f = intercept + linear x + quadratic x^2 (quadratic < 0 for diminishing returns). Optimum (r - linear) / (2 quadratic) when quadratic < 0; otherwise the better end of the range.',
  'linear-plateau: f = intercept + slope min(x, join); plateau = intercept + slope join. Optimum: join when slope > r, else 0.',
  'quadratic-plateau: f = intercept + linear m + quadratic m^2 with m = min(x, join) and quadratic = -linear / (2 join) (smooth join); plateau = intercept + linear join / 2. Optimum join (1 - r / linear) = (r - linear) / (2 quadratic).',
  'exponential: f = intercept + rise (1 - exp(-curvature x)); asymptote = intercept + rise. Optimum log(rise curvature / r) / curvature when rise curvature > r, else 0.',
  'Optima outside the tested rates are held at the nearest tested rate and flagged (above-tested-range, below-tested-range, no-input-pays).',
];
