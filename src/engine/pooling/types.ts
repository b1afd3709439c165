// Public shapes of two-stage pooling. Every number is a plain `number | null` (null where a
// value cannot be computed, with the reason in `notes`) so that results serialise to JSON.

export type Tau2Method = 'reml' | 'ml' | 'dl' | 'pm' | 'fixed';
export type IntervalMethod = 'hksj' | 'wald';
/**
 * New-site prediction: 'bootstrap-tau2' = parametric bootstrap over the confidence distribution
 * of tau² (Nagashima, Noma & Furukawa 2019); 'plug-in-t' = mean ± t(k - 2) sqrt(SE² + tau²)
 * with tau² plugged in as if known (Higgins, Thompson & Spiegelhalter 2009).
 */
export type PredictionMethod = 'bootstrap-tau2' | 'plug-in-t';

export interface NewSiteValues {
  lower: number | null;
  upper: number | null;
  probPositive: number | null;
  probAboveThreshold: number | null;
}

export interface NewSitePrediction extends NewSiteValues {
  /** The method that made lower/upper and the probabilities (and predictionLower/Upper). */
  method: PredictionMethod;
  /** Bootstrap draws and seed (null for plug-in-t). */
  draws: number | null;
  seed: number | null;
  description: string;
  probabilities: string;
  /** The plug-in t interval and probabilities, always given for comparison. */
  plugInT: NewSiteValues;
}

export interface PoolingItem {
  trial: string;
  estimate: number;
  se: number;
  /** Residual df of the trial's estimate; carried through, used only when k = 1. */
  df?: number | null;
  year?: number | null;
  covariates?: Record<string, number | string | null>;
}

export interface PoolingOptions {
  tau2: Tau2Method;
  interval: IntervalMethod;
  /** Knapp–Hartung scale factor floored at 1, so the interval is never narrower than Wald. */
  hksjFloor?: boolean;
  /** Confidence level, e.g. 0.95. */
  confidence: number;
  /** Break-even effect for probAboveThreshold. */
  threshold: number;
  moderators?: string[];
  /** New-site prediction method; default 'bootstrap-tau2'. */
  prediction?: PredictionMethod;
  /** Bootstrap draws (default 20,000) and seed of the predictive distribution. */
  predictionDraws?: number;
  predictionSeed?: number;
}

export interface PoolWeight {
  trial: string;
  /** 1 / (se² + tau²). */
  weight: number;
  /** Share of the total weight, 0..1. */
  share: number;
}

export interface LeaveOneOutRow {
  trial: string;
  estimate: number | null;
  se: number | null;
  tau2: number | null;
  lower: number | null;
  upper: number | null;
}

export interface InfluenceRow {
  trial: string;
  /** Internally standardised residual: (y - mu) / sqrt(se² + tau² - var(mu)). */
  standardisedResidual: number | null;
  /** Deleted residual: (y - mu(-i)) / sqrt(se² + tau²(-i) + var(mu(-i))). */
  studentisedDeletedResidual: number | null;
  /** (mu - mu(-i))² / var(mu). */
  cooksDistance: number | null;
  /** tau²(-i) - tau². */
  tau2Change: number | null;
  /** Leverage: the trial's weight share (the diagonal of the intercept-only model's hat matrix). */
  leverage: number | null;
}

export interface CumulativeRow {
  trial: string;
  year: number;
  k: number;
  estimate: number | null;
  se: number | null;
  tau2: number | null;
  lower: number | null;
  upper: number | null;
}

export interface Sensitivity {
  leaveOneOut: LeaveOneOutRow[];
  influence: InfluenceRow[];
  cumulative: CumulativeRow[];
  notes: string[];
}

export interface RegressionCoefficient {
  /** "intercept", a continuous moderator name, or "moderator=level" for a dummy column. */
  term: string;
  estimate: number;
  se: number;
  /** t (Knapp–Hartung) or z (Wald) statistic. */
  statistic: number;
  p: number;
  lower: number;
  upper: number;
}

export interface SubgroupRow {
  level: string;
  k: number;
  estimate: number | null;
  se: number | null;
  lower: number | null;
  upper: number | null;
  tau2: number | null;
}

export interface SubgroupAnalysis {
  moderator: string;
  groups: SubgroupRow[];
  /** Between-group Q on the group estimates with inverse-variance (Wald) weights; null with fewer than two groups. */
  betweenGroups: HeterogeneityTest | null;
  note: string;
}

/** A Q statistic with its chi-square df and upper-tail p (p null when df = 0). */
export interface HeterogeneityTest {
  Q: number;
  df: number;
  p: number | null;
}

/** Joint test that every moderator coefficient is zero. */
export interface ModeratorTest {
  statistic: number;
  /** F with Knapp–Hartung intervals, chi-square with Wald intervals. */
  distribution: 'F' | 'chi-square';
  df: number;
  /** Denominator df of F; null for chi-square. */
  dfDenominator: number | null;
  p: number;
}

export interface MetaRegression {
  moderators: string[];
  k: number;
  /** Trials left out because a moderator value was missing. */
  excluded: string[];
  statistic: 't' | 'z';
  df: number | null;
  coefficients: RegressionCoefficient[];
  aliased: string[];
  /** tau² left over after the moderators. */
  residualTau2: number | null;
  /** Share of tau² explained by the moderators: max(0, (tau² without - tau² with) / tau² without); null if tau² without is 0. */
  tau2Explained: number | null;
  /** Heterogeneity the moderators leave unexplained: Q of the residuals with inverse-variance (fixed-effect) weights. */
  residualHeterogeneity: HeterogeneityTest | null;
  /** Joint test of all moderator coefficients: F (Knapp–Hartung) or chi-square (Wald). */
  moderatorTest: ModeratorTest | null;
  subgroups: SubgroupAnalysis[];
  notes: string[];
}

export interface PooledResult {
  estimate: number | null;
  se: number | null;
  lower: number | null;
  upper: number | null;
  p: number | null;
  tau2: number | null;
  tau: number | null;
  tau2Lower: number | null;
  tau2Upper: number | null;
  /** tau² sits on the zero boundary. */
  tau2AtBoundary: boolean;
  Q: number | null;
  Qdf: number | null;
  Qp: number | null;
  /** I² from Q: max(0, (Q - df) / Q). */
  I2: number | null;
  /** I² from tau²: tau² / (tau² + s²), s² the typical within-trial variance (Higgins & Thompson 2002). */
  I2FromTau2: number | null;
  /** H² from Q: Q / df. */
  H2: number | null;
  /** H² from tau²: (tau² + s²) / s². */
  H2FromTau2: number | null;
  /** The new-site interval and probabilities of the method in prediction.method. */
  predictionLower: number | null;
  predictionUpper: number | null;
  probPositive: number | null;
  probAboveThreshold: number | null;
  prediction: NewSitePrediction;
  k: number;
  /** df of the interval for the mean (null = normal). */
  df: number | null;
  /** Knapp–Hartung scale factor q (before any floor), null for Wald. */
  hksjScale: number | null;
  method: {
    tau2: string;
    interval: string;
    prediction: string;
    probabilities: string;
    converged: boolean;
    iterations: number;
  };
  weights: PoolWeight[];
  sensitivity: Sensitivity;
  metaRegression?: MetaRegression;
  notes: string[];
}
