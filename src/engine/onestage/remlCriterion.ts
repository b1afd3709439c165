// The restricted likelihood for given variance parameters, accumulated trial by trial:
//   -2 logLik_REML = (N - p) log(2 pi) + sum_i log|V_i| + log|X'V^-1 X| + r'V^-1 r,
// r = y - X beta_hat (the scale lme4 reports as its REML criterion). X holds the treatment
// cell means, whose columns are the treatment columns of B in each trial. Trials of one design
// pattern share the design block of B'V^-1 B; per trial only B'V^-1 y is computed. Trials laid
// out alike with residual variances of their own share one eigen-decomposition instead
// (spectralGroups.ts, spectralEvaluation.ts).
import { cholesky, cholInverse, cholLogDet, cholSolve, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { NetworkStatistics } from './sufficientStatistics.js';
import type { ParameterLayout } from './parameters.js';
import { designHash, evaluatePattern, sameDesign, randomColumnsOf, type PatternState } from './trialBlock.js';
import { patternMoments, type PatternMoments } from './patternMoments.js';
import { EvaluationPool, type EvaluationBuffers } from './evaluationPool.js';
import { spectralGroups, type SpectralGroup } from './spectralGroups.js';
import { sharedParameterCount } from './arrowhead.js';
import { accumulateGroup, decomposeLayout, spectralStateFor, type SpectralState } from './spectralEvaluation.js';

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
  /** Design group of each trial (identical design, any residual parameter): for design-only work. */
  readonly designOf: Int32Array;
  /** Trials of one layout with residual variances of their own, evaluated through one decomposition (spectralGroups.ts). */
  readonly spectral: readonly SpectralGroup[];
  /** 1 for a pattern whose trial belongs to a spectral group. */
  readonly spectralPattern: Uint8Array;
  /** Leading parameters that meet every other in the per-block terms (arrowhead.ts). */
  readonly sharedParameters: number;
  /** Buffers of discarded evaluations, reused by the next ones (evaluationPool.ts). */
  readonly pool: EvaluationPool;
}

export function modelFrame(stats: NetworkStatistics, layout: ParameterLayout): ModelFrame {
  // trials of one design (identical design blocks of the Gram matrix: hash, then exact check),
  // whatever their residual parameter; then patterns: one design and one residual parameter
  const { groupOf: designOf, representative: designTrial } = groupTrials(stats);
  const patternOf = new Int32Array(stats.trials.length);
  const patternTrial: number[] = [];
  const patternKey = new Map<number, number>();
  const nDesigns = designTrial.length;
  for (let i = 0; i < stats.trials.length; i++) {
    const key = layout.residualParameter[i] * nDesigns + designOf[i];
    let q = patternKey.get(key);
    if (q === undefined) {
      q = patternTrial.length;
      patternTrial.push(i);
      patternKey.set(key, q);
    }
    patternOf[i] = q;
  }
  const patternCount = new Int32Array(patternTrial.length);
  for (const q of patternOf) patternCount[q]++;
  const members: (typeof stats.trials)[number][][] = patternTrial.map(() => []);
  stats.trials.forEach((t, i) => members[patternOf[i]].push(t));
  const moments = members.map(patternMoments);
  const columnOffsets = new Int32Array(patternTrial.length + 1);
  moments.forEach((mo, q) => (columnOffsets[q + 1] = columnOffsets[q] + mo.nColumns * (stats.trials[patternTrial[q]].m - 1)));
  // random columns depend on the design only: one array per design, shared by its trials
  const designColumns = designTrial.map((i) => randomColumnsOf(stats.trials[i]));
  const randomColumns = Array.from(designOf, (d) => designColumns[d]);
  const spectral = spectralGroups(stats, layout, designOf, randomColumns);
  const spectralPattern = new Uint8Array(patternTrial.length);
  for (const g of spectral) for (const i of g.trials) spectralPattern[patternOf[i]] = 1;
  const pool = new EvaluationPool({
    representatives: patternTrial.map((i) => stats.trials[i]),
    randomColumns: patternTrial.map((i) => randomColumns[i]),
    hzyLength: columnOffsets[patternTrial.length],
    nColumns: moments.reduce((s, mo) => s + mo.nColumns, 0),
    spectralStates: () => spectral.map((g) => spectralStateFor(stats, g)),
  });
  const sharedParameters = sharedParameterCount(layout.parameters);
  return { stats, layout, randomColumns, patternOf, patternTrial, patternCount, moments, columnOffsets, designOf, spectral, spectralPattern, sharedParameters, pool };
}

/** Groups of trials with identical designs, numbered in order of first appearance. */
function groupTrials(stats: NetworkStatistics): { groupOf: Int32Array; representative: number[] } {
  const candidates = new Map<number, number[]>();
  const representative: number[] = [];
  const groupOf = new Int32Array(stats.trials.length);
  for (let i = 0; i < stats.trials.length; i++) {
    const t = stats.trials[i];
    if (t.sameDesignAs >= 0) {
      // known while the statistics were built: no need to compare Gram matrices
      groupOf[i] = groupOf[t.sameDesignAs];
      continue;
    }
    const h = designHash(t);
    let list = candidates.get(h);
    if (!list) candidates.set(h, (list = []));
    let id = -1;
    for (const q of list) {
      if (sameDesign(stats.trials[representative[q]], t)) {
        id = q;
        break;
      }
    }
    if (id < 0) {
      id = representative.length;
      representative.push(i);
      list.push(id);
    }
    groupOf[i] = id;
  }
  return { groupOf, representative };
}

export interface Evaluation {
  readonly theta: Float64Array;
  /** -2 logLik_REML. */
  readonly criterion: number;
  readonly beta: Float64Array;
  /** (X'V^-1 X)^-1, p x p. */
  readonly c: Float64Array;
  /**
   * Per pattern: its shared block; for a pattern of a spectral group only when `spectral` is
   * null (a complete evaluation, see completeEvaluation).
   */
  readonly patterns: PatternState[];
  /** Per spectral group of the frame: its decomposition, or null when every pattern was filled instead. */
  readonly spectral: readonly SpectralState[] | null;
  /** Per pattern column f (see patternMoments): the design rows of B'V^-1 y at
   *  frame.columnOffsets, and the quadratic part of y'V^-1 y (its y'y part is sumYy / sigma2). */
  readonly hzy: Float64Array;
  readonly hyy: Float64Array;
  /** Per pattern: the design rows of B'V^-1 y summed over its trials ((m - 1) each, same offsets as trials' m - 1). */
  readonly hzySum: Float64Array[];
  readonly sumLogDetV: number;
  readonly logDetXVX: number;
  /** The memory behind patterns, hzy, hyy and hzySum (returned to the frame's pool by releaseEvaluation). */
  readonly buffers: EvaluationBuffers;
}

/**
 * Hands an evaluation's memory to the next evaluation of the same frame. Only for an evaluation
 * nothing reads again (the optimiser's rejected candidates and superseded iterates).
 */
export function releaseEvaluation(frame: ModelFrame, ev: Evaluation): void {
  frame.pool.give(ev.buffers);
}

export function termVariances(frame: ModelFrame, theta: ArrayLike<number>): Float64Array {
  return Float64Array.from(frame.layout.termParameter, (k) => (k < 0 ? 0 : theta[k]));
}

// evaluateReml is kept free of long loops: the per-pattern work sits in small functions that V8
// optimises early, instead of one large function running on on-stack-replaced code.
/**
 * The criterion and what the derivatives need at theta. Trials of spectral groups are evaluated
 * through their group's decomposition unless `complete` asks for every pattern's block (which
 * the second-order terms and the per-trial contrasts read).
 */
export function evaluateReml(frame: ModelFrame, theta: ArrayLike<number>, complete = false): Evaluation {
  const { stats, layout } = frame;
  const p = stats.fixed.length;
  const nQ = frame.patternTrial.length;
  const gTerm = termVariances(frame, theta);
  const xvx = new Float64Array(p * p);
  const xvy = new Float64Array(p);
  let yvy = 0;
  let sumLogDetV = 0;
  const buffers = frame.pool.take();
  const { patterns, hzy, hyy, hzySum } = buffers;
  const skip = complete ? null : frame.spectralPattern;
  try {
    for (let q = 0; q < nQ; q++) {
      if (skip && skip[q]) continue;
      const i = frame.patternTrial[q];
      evaluatePattern(stats.trials[i], gTerm, theta[layout.residualParameter[i]], patterns[q]);
    }
    if (!complete) {
      const sums = new Float64Array(2);
      for (let g = 0; g < frame.spectral.length; g++) {
        decomposeLayout(stats, frame.spectral[g], gTerm, buffers.spectral[g]);
        accumulateGroup(stats, frame.spectral[g], theta, buffers.spectral[g], p, xvx, xvy, sums);
      }
      sumLogDetV += sums[0];
      yvy += sums[1];
    }
  } catch (err) {
    frame.pool.give(buffers);
    throw err;
  }
  let col = 0;
  for (let q = 0; q < nQ; q++) {
    if (!(skip && skip[q])) {
      sumLogDetV += accumulateXvx(frame, patterns[q], q, p, xvx);
      yvy += patternDataTerms(frame, patterns[q], q, col, hzy, hyy, hzySum[q], xvy);
    }
    col += frame.moments[q].nColumns;
  }
  const xvxM: Matrix = { rows: p, cols: p, data: xvx };
  let l: Matrix;
  try {
    l = cholesky(xvxM);
  } catch (err) {
    frame.pool.give(buffers);
    throw err;
  }
  const logDetXVX = cholLogDet(l);
  const beta = cholSolve(l, xvy);
  let rvr = yvy;
  for (let j = 0; j < p; j++) rvr -= xvy[j] * beta[j];
  const dfResidual = stats.nObservations - p;
  const criterion = dfResidual * Math.log(2 * Math.PI) + sumLogDetV + logDetXVX + rvr;
  const spectral = complete || frame.spectral.length === 0 ? null : buffers.spectral;
  return { theta: Float64Array.from(theta), criterion, beta, c: cholInverse(l).data, patterns, spectral, hzy, hyy, hzySum, sumLogDetV, logDetXVX, buffers };
}

/** For code that reads every pattern's block: a programming error if some were left to the spectral route. */
export function assertComplete(ev: Evaluation, reader: string): void {
  if (ev.spectral) throw new Error(`${reader} needs a complete evaluation (completeEvaluation)`);
}

/** `ev` itself if every pattern's block is filled, else a complete evaluation at its theta. */
export function completeEvaluation(frame: ModelFrame, ev: Evaluation): Evaluation {
  return ev.spectral ? evaluateReml(frame, ev.theta, true) : ev;
}

/** X'V^-1 X gains the pattern's treatment block times its number of trials; returns its part of sum log|V_i|. */
function accumulateXvx(frame: ModelFrame, pat: PatternState, q: number, p: number, xvx: Float64Array): number {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const mz = t.m - 1;
  const tc = t.fixedColumns;
  const tg = t.fixedIndex;
  const count = frame.patternCount[q];
  for (let a = 0; a < tc.length; a++) for (let b = 0; b < tc.length; b++) xvx[tg[a] * p + tg[b]] += count * pat.hzz[tc[a] * mz + tc[b]];
  return count * ((t.n - pat.randomColumns.length) * Math.log(pat.sigma2) + pat.logDetM);
}

/**
 * The data terms of one pattern: per column the design rows of B'V^-1 y (into hzy) and the
 * quadratic part of y'V^-1 y (into hyy), the summed vector's design rows (into hs) and its
 * X'V^-1 y. Returns the pattern's part of y'V^-1 y.
 */
function patternDataTerms(frame: ModelFrame, pat: PatternState, q: number, col0: number, hzy: Float64Array, hyy: Float64Array, hs: Float64Array, xvy: Float64Array): number {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const mo = frame.moments[q];
  const m = t.m;
  const mz = m - 1;
  let yvy = 0;
  // H_Zy = (u - gz u_R) / sigma2 ; quadratic part of H_yy = -u_R' W u_R / sigma2
  for (let f = 0; f < mo.nColumns; f++) {
    designRowsOfHyAt(mo.columns, f * m, pat, mz, hzy, frame.columnOffsets[q] + f * mz);
    const h = -columnQuadratic(mo.columns, f * m, pat) / pat.sigma2;
    hyy[col0 + f] = h;
    yvy += h;
  }
  yvy += mo.sumYy / pat.sigma2;
  designRowsOfHyAt(mo.sum, 0, pat, mz, hs, 0);
  const tc = t.fixedColumns;
  const tg = t.fixedIndex;
  for (let a = 0; a < tc.length; a++) xvy[tg[a]] += hs[tc[a]];
  return yvy;
}

/** u_R' W u_R for the data vector u = columns[off ...]. */
function columnQuadratic(columns: Float64Array, off: number, pat: PatternState): number {
  const R = pat.randomColumns;
  const r = R.length;
  let quad = 0;
  for (let a = 0; a < r; a++) {
    let s = 0;
    for (let b = 0; b < r; b++) s += pat.w[a * r + b] * columns[off + R[b]];
    quad += columns[off + R[a]] * s;
  }
  return quad;
}

/** (u - gz u_R) / sigma2, the design rows of B'V^-1 y for u = Z'y = src[srcOff ...], into out[outOff ...]. */
function designRowsOfHyAt(src: Float64Array, srcOff: number, pat: PatternState, mz: number, out: Float64Array, outOff: number): void {
  const R = pat.randomColumns;
  const r = R.length;
  for (let j = 0; j < mz; j++) {
    let s = src[srcOff + j];
    for (let b = 0; b < r; b++) s -= pat.gz[j * r + b] * src[srcOff + R[b]];
    out[outOff + j] = s / pat.sigma2;
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
