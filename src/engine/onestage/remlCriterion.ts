// The restricted likelihood for given variance parameters, accumulated trial by trial:
//   -2 logLik_REML = (N - p) log(2 pi) + sum_i log|V_i| + log|X'V^-1 X| + r'V^-1 r,
// r = y - X beta_hat (the scale lme4 reports as its REML criterion). X holds the treatment
// cell means, whose columns are the treatment columns of B in each trial.
import { cholesky, cholInverse, cholLogDet, cholSolve, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { NetworkStatistics } from './sufficientStatistics.js';
import type { ParameterLayout } from './parameters.js';
import { evaluateTrialBlock, randomColumnsOf, type TrialBlockState } from './trialBlock.js';

export interface ModelFrame {
  readonly stats: NetworkStatistics;
  readonly layout: ParameterLayout;
  /** Random columns per trial, computed once. */
  readonly randomColumns: readonly Int32Array[];
}

export function modelFrame(stats: NetworkStatistics, layout: ParameterLayout): ModelFrame {
  return { stats, layout, randomColumns: stats.trials.map(randomColumnsOf) };
}

export interface Evaluation {
  readonly theta: Float64Array;
  /** -2 logLik_REML. */
  readonly criterion: number;
  readonly beta: Float64Array;
  /** (X'V^-1 X)^-1, p x p. */
  readonly c: Float64Array;
  readonly states: TrialBlockState[];
  readonly sumLogDetV: number;
  readonly logDetXVX: number;
}

export function termVariances(frame: ModelFrame, theta: ArrayLike<number>): Float64Array {
  return Float64Array.from(frame.layout.termParameter, (k) => (k < 0 ? 0 : theta[k]));
}

export function evaluateReml(frame: ModelFrame, theta: ArrayLike<number>): Evaluation {
  const { stats, layout } = frame;
  const p = stats.treatments.length;
  const gTerm = termVariances(frame, theta);
  const xvx = new Float64Array(p * p);
  const xvy = new Float64Array(p);
  let yvy = 0;
  let sumLogDetV = 0;
  const states: TrialBlockState[] = new Array(stats.trials.length);
  for (let i = 0; i < stats.trials.length; i++) {
    const t = stats.trials[i];
    const s = evaluateTrialBlock(t, frame.randomColumns[i], gTerm, theta[layout.residualParameter[i]]);
    states[i] = s;
    sumLogDetV += s.logDetV;
    const m = t.m;
    const yc = t.yColumn;
    const tc = t.treatmentColumns;
    const tg = t.treatmentIndex;
    for (let a = 0; a < tc.length; a++) {
      const ra = tc[a] * m;
      xvy[tg[a]] += s.h[ra + yc];
      for (let b = 0; b < tc.length; b++) xvx[tg[a] * p + tg[b]] += s.h[ra + tc[b]];
    }
    yvy += s.h[yc * m + yc];
  }
  const xvxM: Matrix = { rows: p, cols: p, data: xvx };
  const l = cholesky(xvxM);
  const logDetXVX = cholLogDet(l);
  const beta = cholSolve(l, xvy);
  let rvr = yvy;
  for (let j = 0; j < p; j++) rvr -= xvy[j] * beta[j];
  const dfResidual = stats.nObservations - p;
  const criterion = dfResidual * Math.log(2 * Math.PI) + sumLogDetV + logDetXVX + rvr;
  return { theta: Float64Array.from(theta), criterion, beta, c: cholInverse(l).data, states, sumLogDetV, logDetXVX };
}

/** The criterion, or +Infinity where V is not positive definite (outside the parameter space). */
export function criterionOrInfinity(frame: ModelFrame, theta: ArrayLike<number>): { value: number; evaluation: Evaluation | null } {
  try {
    const e = evaluateReml(frame, theta);
    return { value: Number.isFinite(e.criterion) ? e.criterion : Infinity, evaluation: e };
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return { value: Infinity, evaluation: null };
    throw err;
  }
}
