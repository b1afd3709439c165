import type { PredictionMethod } from '../pooling/types.js';
import type { OneStageNewSite } from './newSitePrediction.js';
import type { SiteYearView } from './crossed/siteYearView.js';

// Public shapes of the one-stage REML fit. Plain values only, so a result can be stored as JSON
// and sent across a worker or IPC boundary unchanged.

export type RandomTerm = 'trial' | 'block' | 'treatment-by-trial';
export const RANDOM_TERMS: readonly RandomTerm[] = ['trial', 'block', 'treatment-by-trial'];

export interface OneStageOptions {
  readonly random: readonly RandomTerm[];
  readonly residual: 'common' | 'per-trial';
  readonly df: 'satterthwaite' | 'kenward-roger' | 'residual';
  /** Confidence level of the contrast intervals, e.g. 0.95. */
  readonly confidence: number;
  /** Likelihood-ratio test for each random term (one refit per term). Default true. */
  readonly lrt?: boolean;
  /** Profile-likelihood intervals for the random-term variances. Default true. */
  readonly profile?: boolean;
  /**
   * Numeric trial covariates (names in TrialInput.covariates) with a fixed slope each, centred
   * at their mean over the trials used; trials without a value are left out with a warning.
   */
  readonly covariates?: readonly string[];
  /** New-site prediction per contrast (method, threshold for the probability, draws, seed); none when absent. */
  readonly newSite?: { readonly method: PredictionMethod; readonly threshold: number; readonly draws: number; readonly seed: number };
}

export interface OneStageHooks {
  readonly onProgress?: (e: { stage: string; iteration: number; criterion: number }) => void;
  readonly signal?: AbortSignal;
}

export interface VarianceSummary {
  trial?: number;
  block?: number;
  'treatment-by-trial'?: number;
  /** Terms of the model with sites and years (crossed/fitCrossed.ts). */
  site?: number;
  year?: number;
  'treatment-by-site'?: number;
  'treatment-by-year'?: number;
  residual?: number;
  residualByTrial?: Record<string, number>;
}

export interface VarianceComponentReport {
  /** 'trial' | 'block' | 'treatment-by-trial' | 'residual' | 'residual (<trial>)' (one residual per trial) */
  name: string;
  estimate: number;
  /** From the inverse average-information matrix; null for a component at zero. */
  se: number | null;
  atZero: boolean;
  /** Likelihood-ratio test of the component against zero (random terms only). */
  lrt: { statistic: number; p: number; reducedLogLik: number } | null;
  /** Profile-likelihood interval at the fit's confidence level (random terms only). */
  profileLower: number | null;
  profileUpper: number | null;
}

export interface MeanReport {
  treatment: string;
  estimate: number;
  se: number;
  /** df of the mean by the fit's df method, and its interval (with Kenward–Roger, from the adjusted SE). */
  df: number | null;
  lower: number | null;
  upper: number | null;
}

export interface ContrastReport {
  name: string;
  estimate: number | null;
  se: number | null;
  df: number | null;
  lower: number | null;
  upper: number | null;
  p: number | null;
  /** Which degrees-of-freedom method produced df (and, for Kenward–Roger, the adjusted se). */
  dfMethod: OneStageOptions['df'];
  /** Standard error before the Kenward–Roger adjustment (equal to se otherwise). */
  seUnadjusted: number | null;
  note?: string;
}

export interface TrialContrastReport {
  name: string;
  /** Shrunken (BLUP) estimate of the contrast in this trial. */
  blup: number | null;
  /** The trial's own fixed-effects estimate (blocks and treatments fitted in that trial alone). */
  raw: number | null;
  rawSe: number | null;
  rawDf: number | null;
}

/** A fixed covariate's slope: inference as for a contrast (the unit vector on its coefficient). */
export interface CovariateReport extends Omit<ContrastReport, 'note'> {
  /** The covariate's mean over the trials used: the treatment means are the means at this value. */
  centre: number;
}

export interface RunRecord {
  method: string;
  start: Record<string, number>;
  iterations: number;
  emIterations: number;
  criterionPath: number[];
  stepHalvings: number;
  convergence: string;
  outcome: 'converged' | 'max-iterations' | 'stalled';
  finalDecrement: number;
  elapsedMs: number;
}

export interface OneStageResult {
  minusTwoLogLik: number;
  logLik: number;
  converged: boolean;
  iterations: number;
  variance: VarianceSummary;
  means: MeanReport[];
  contrasts: ContrastReport[];
  /** One per covariate in options.covariates (empty without covariates). */
  covariates: CovariateReport[];
  varianceComponents: VarianceComponentReport[];
  trials: { trial: string; contrasts: TrialContrastReport[] }[];
  /** New-site prediction per contrast (when options.newSite is given). */
  newSite?: OneStageNewSite[];
  nObservations: number;
  nTrials: number;
  droppedPlots: number;
  /** random: the term names fitted (RandomTerm, or with sites and years the CrossedTerm names); yearAsFixed only with sites and years. */
  options: { random: string[]; yearAsFixed?: boolean; residual: OneStageOptions['residual']; df: OneStageOptions['df']; confidence: number; covariates: string[] };
  /** With site or year terms: the treatment-by-environment split and the site-year predictions (crossed/siteYearView.ts). */
  siteYearView?: SiteYearView;
  warnings: string[];
  run: RunRecord;
}

export class OneStageCancelledError extends Error {
  constructor() {
    super('one-stage fit cancelled');
    this.name = 'OneStageCancelledError';
  }
}
