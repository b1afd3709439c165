// Shapes of the mixed-model quadratic rate response (random trial deviations of the
// intercept, slope and curvature, fitted by REML). All numbers JSON-safe (non-finite -> null);
// rates in the rate factor's unit, yields in the trait's unit.
import type { Num, OptimumFlag } from '../types.js';

export interface MixedPopulationOptimum {
  /** Optimum of the population-average curve, held inside `range`. */
  readonly optimum: Num;
  /** (r - linear) / (2 quadratic) before holding; null when quadratic >= 0. */
  readonly unconstrainedOptimum: Num;
  /** Delta-method standard error of the unconstrained optimum (fixed-effect covariance). */
  readonly se: Num;
  readonly lower: Num;
  readonly upper: Num;
  readonly confidence: number;
  readonly method: string;
  readonly flags: OptimumFlag[];
  /** Rates tested in every trial: where the optimum is sought. */
  readonly range: [Num, Num];
  readonly yieldGainAtOptimum: Num;
  readonly netReturnAtOptimum: Num;
}

export interface MixedTrialOptimum {
  readonly trial: string;
  /** Trial-specific coefficients: fixed effects plus the trial's predicted deviations. */
  readonly intercept: Num;
  readonly linear: Num;
  readonly quadratic: Num;
  readonly optimum: Num;
  readonly unconstrainedOptimum: Num;
  readonly flags: OptimumFlag[];
}

export interface MixedTrialOptima {
  readonly n: number;
  /** Type-7 quantiles of the trial-specific optima (held inside each trial's tested range). */
  readonly quantiles: { readonly p: number; readonly value: Num }[];
  readonly min: Num;
  readonly max: Num;
  readonly shareNoInputPays: Num;
  readonly byTrial: MixedTrialOptimum[];
}

export interface MixedRateResult {
  readonly model: 'quadratic-random-coefficients';
  readonly method: 'REML';
  readonly trials: number;
  readonly plots: number;
  /** Rates were divided by this for fitting; every figure here is back in original units. */
  readonly rateScale: number;
  /** Population-average curve: intercept + linear x + quadratic x². */
  readonly fixed: { readonly intercept: Num; readonly linear: Num; readonly quadratic: Num };
  readonly standardErrors: { readonly intercept: Num; readonly linear: Num; readonly quadratic: Num };
  /** Covariance of (intercept, linear, quadratic) estimates, s² (X'V⁻¹X)⁻¹. */
  readonly fixedCovariance: Num[][];
  /** G: covariance of the trial deviations (intercept, linear, quadratic). */
  readonly randomCovariance: Num[][];
  readonly randomSd: { readonly intercept: Num; readonly linear: Num; readonly quadratic: Num };
  readonly randomCorrelations: { readonly interceptLinear: Num; readonly interceptQuadratic: Num; readonly linearQuadratic: Num };
  /** Variance of each blocking factor within trials (block; row and col for row-column designs). */
  readonly groupingVariances: Record<string, Num>;
  readonly residualVariance: Num;
  /** REML log-likelihood, on the scale of lme4's logLik(REML = TRUE). */
  readonly logLik: Num;
  readonly convergence: {
    readonly converged: boolean;
    readonly method: string;
    readonly evaluations: number;
    readonly starts: number;
    /** Spread of the REML deviance reached from the different starts. */
    readonly startSpread: Num;
    /** Some variance (or a combination of the trial deviations) is estimated at zero. */
    readonly varianceAtZero: boolean;
    readonly note: string | null;
  };
  readonly optimum: MixedPopulationOptimum;
  readonly trialOptima: MixedTrialOptima;
}
