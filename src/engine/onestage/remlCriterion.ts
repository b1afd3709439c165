// The restricted likelihood for given variance parameters, accumulated trial by trial:
//   -2 logLik_REML = (N - p) log(2 pi) + sum_i log|V_i| + log|X'V^-1 X| + r'V^-1 r,
// r = y - X beta_hat (the scale lme4 reports as its REML criterion). X holds the treatment
// cell means, whose columns are the treatment columns of B in each trial. Trials of one design
// pattern share the design block of B'V^-1 B; per trial only B'V^-1 y is computed.
import { cholesky, cholInverse, cholLogDet, cholSolve, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { NetworkStatistics } from './sufficientStatistics.js';
import type { ParameterLayout } from './parameters.js';
import { designKey, evaluatePattern, randomColumnsOf, type PatternState } from './trialBlock.js';
import { patternMoments, type PatternMoments } from './patternMoments.js';

export interface ModelFrame {
  readonly stats: NetworkStatistics;
  readonly layout: ParameterLayout;
  /** Random columns per trial, computed once. */
  readonly randomColumns: readonly Int32Array[];
  /** Design pattern of each trial (same design, treatments and residual parameter), one trial per pattern, trials per pattern. */
  readonly patternOf: Int32Array;
  readonly patternTrial: readonly number[];
  readonly patternCount: Int32Array;
  /** Data moments of each pattern (see patternMoments.ts). */
  readonly moments: readonly PatternMoments[];
  /** Offset of each pattern's first column vector in Evaluation.hzy (m - 1 values per column). */
  readonly columnOffsets: Int32Array;
}

export function modelFrame(stats: NetworkStatistics, layout: ParameterLayout): ModelFrame {
  const ids = new Map<string, number>();
  const patternTrial: number[] = [];
  const patternOf = Int32Array.from(stats.trials, (t, i) => {
    const key = `${layout.residualParameter[i]}|${designKey(t)}`;
    let id = ids.get(key);
    if (id === undefined) {
      id = patternTrial.length;
      ids.set(key, id);
      patternTrial.push(i);
    }
    return id;
  });
  const patternCount = new Int32Array(patternTrial.length);
  for (const q of patternOf) patternCount[q]++;
  const members: (typeof stats.trials)[number][][] = patternTrial.map(() => []);
  stats.trials.forEach((t, i) => members[patternOf[i]].push(t));
  const moments = members.map(patternMoments);
  const columnOffsets = new Int32Array(patternTrial.length + 1);
  moments.forEach((mo, q) => (columnOffsets[q + 1] = columnOffsets[q] + mo.nColumns * (stats.trials[patternTrial[q]].m - 1)));
  return { stats, layout, randomColumns: stats.trials.map(randomColumnsOf), patternOf, patternTrial, patternCount, moments, columnOffsets };
}

export interface Evaluation {
  readonly theta: Float64Array;
  /** -2 logLik_REML. */
  readonly criterion: number;
  readonly beta: Float64Array;
  /** (X'V^-1 X)^-1, p x p. */
  readonly c: Float64Array;
  readonly patterns: PatternState[];
  /** Per pattern column f (see patternMoments): the design rows of B'V^-1 y at
   *  frame.columnOffsets, and the quadratic part of y'V^-1 y (its y'y part is sumYy / sigma2). */
  readonly hzy: Float64Array;
  readonly hyy: Float64Array;
  /** Per pattern: the design rows of B'V^-1 y summed over its trials ((m - 1) each, same offsets as trials' m - 1). */
  readonly hzySum: Float64Array[];
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
  const patterns: PatternState[] = frame.patternTrial.map((i) => evaluatePattern(stats.trials[i], frame.randomColumns[i], gTerm, theta[layout.residualParameter[i]]));
  // X'V^-1 X: the pattern's treatment block times the number of its trials
  patterns.forEach((pat, q) => {
    const t = stats.trials[frame.patternTrial[q]];
    const mz = t.m - 1;
    const tc = t.treatmentColumns;
    const tg = t.treatmentIndex;
    const count = frame.patternCount[q];
    for (let a = 0; a < tc.length; a++) for (let b = 0; b < tc.length; b++) xvx[tg[a] * p + tg[b]] += count * pat.hzz[tc[a] * mz + tc[b]];
    sumLogDetV += count * ((t.n - pat.randomColumns.length) * Math.log(pat.sigma2) + pat.logDetM);
  });
  const nColumns = frame.moments.reduce((n, mo) => n + mo.nColumns, 0);
  const hzy = new Float64Array(frame.columnOffsets[frame.patternTrial.length]);
  const hyy = new Float64Array(nColumns);
  const hzySum: Float64Array[] = [];
  let col = 0;
  for (let q = 0; q < patterns.length; q++) {
    const t = stats.trials[frame.patternTrial[q]];
    const pat = patterns[q];
    const mo = frame.moments[q];
    const mz = t.m - 1;
    const R = pat.randomColumns;
    const r = R.length;
    // H_Zy = (u - gz u_R) / sigma2 ; quadratic part of H_yy = -u_R' W u_R / sigma2
    for (let f = 0; f < mo.nColumns; f++, col++) {
      const u = mo.columns.subarray(f * t.m, f * t.m + mz);
      const o = frame.columnOffsets[q] + f * mz;
      designRowsOfHy(u, pat, mz, hzy.subarray(o, o + mz));
      let quad = 0;
      for (let a = 0; a < r; a++) {
        let s = 0;
        for (let b = 0; b < r; b++) s += pat.w[a * r + b] * u[R[b]];
        quad += u[R[a]] * s;
      }
      hyy[col] = -quad / pat.sigma2;
      yvy += hyy[col];
    }
    yvy += mo.sumYy / pat.sigma2;
    const hs = new Float64Array(mz);
    designRowsOfHy(mo.sum.subarray(0, mz), pat, mz, hs);
    hzySum.push(hs);
    const tc = t.treatmentColumns;
    const tg = t.treatmentIndex;
    for (let a = 0; a < tc.length; a++) xvy[tg[a]] += hs[tc[a]];
  }
  const xvxM: Matrix = { rows: p, cols: p, data: xvx };
  const l = cholesky(xvxM);
  const logDetXVX = cholLogDet(l);
  const beta = cholSolve(l, xvy);
  let rvr = yvy;
  for (let j = 0; j < p; j++) rvr -= xvy[j] * beta[j];
  const dfResidual = stats.nObservations - p;
  const criterion = dfResidual * Math.log(2 * Math.PI) + sumLogDetV + logDetXVX + rvr;
  return { theta: Float64Array.from(theta), criterion, beta, c: cholInverse(l).data, patterns, hzy, hyy, hzySum, sumLogDetV, logDetXVX };
}

/** (u - gz u_R) / sigma2: the design rows of B'V^-1 y for data vector u = Z'y. */
export function designRowsOfHy(u: ArrayLike<number>, pat: PatternState, mz: number, out: Float64Array): void {
  const R = pat.randomColumns;
  const r = R.length;
  for (let j = 0; j < mz; j++) {
    let s = u[j];
    for (let b = 0; b < r; b++) s -= pat.gz[j * r + b] * u[R[b]];
    out[j] = s / pat.sigma2;
  }
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
