// Average-information REML with an EM warm start, step-halving and non-negativity.
//
// Each iteration: score g and average information A at theta; components at zero whose score
// is >= 0 (the criterion would rise if they grew) stay fixed at zero; on the free set take the
// Newton-type step d = -A^-1 g, project onto theta >= 0 and halve the step until the criterion
// does not increase. Convergence: the AI Newton decrement g'A^-1 g on the free set falls below
// DECREMENT_TOL (it estimates twice the remaining fall of -2 logLik), or an accepted step changes
// the criterion by less than CRITERION_TOL and no parameter by more than PARAMETER_TOL relative.
import { cholesky, cholSolve, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import { criterionOrInfinity, releaseEvaluation, type Evaluation, type ModelFrame } from './remlCriterion.js';
import { scoreAndInformation, type ScoreAndInformation } from './remlDerivatives.js';
import { activeParameterTable, type ActiveParameter } from './trialParameters.js';
import { OneStageCancelledError, type OneStageHooks, type RunRecord } from './types.js';
import { borderedFactor, lowRankFactor } from './borderedSolve.js';
import { BORDERED_MIN_FREE } from './informationSolver.js';
import type { SymmetricArrowhead } from './arrowhead.js';

export const DECREMENT_TOL = 1e-10;
export const CRITERION_TOL = 1e-12;
export const PARAMETER_TOL = 1e-10;
/**
 * A step is accepted unless it raises the criterion by more than this fraction of it: its
 * rounding error (a sum over every trial's terms; about 1e-12 relative at 4,000 trials), below
 * which a rise is noise. Rejecting such steps would only halve good Newton steps near the optimum.
 */
const ROUNDING_SLACK = 1e-12;
const MAX_ITERATIONS = 200;
const MAX_HALVINGS = 40;
const EM_ITERATIONS = 3;

export interface OptimiseOptions {
  /** Parameters held at zero throughout (reduced models for likelihood-ratio tests). */
  readonly fixedZero?: readonly number[];
  /** One parameter held at a given value (likelihood profiles). */
  readonly fixedValue?: { readonly index: number; readonly value: number };
  readonly emIterations?: number;
  readonly stage?: string;
}

export interface OptimiseOutcome {
  readonly evaluation: Evaluation;
  readonly score: ScoreAndInformation;
  readonly atZero: boolean[];
  readonly run: RunRecord;
}

export function optimiseReml(frame: ModelFrame, start: Float64Array, hooks: OneStageHooks = {}, opts: OptimiseOptions = {}): OptimiseOutcome {
  const began = Date.now();
  const nP = frame.layout.parameters.length;
  const active = activeParameterTable(frame);
  const fixed = new Array<boolean>(nP).fill(false);
  for (const k of opts.fixedZero ?? []) fixed[k] = true;
  const held = Float64Array.from(start, () => 0);
  if (opts.fixedValue) {
    fixed[opts.fixedValue.index] = true;
    held[opts.fixedValue.index] = opts.fixedValue.value;
  }
  const stage = opts.stage ?? 'reml';
  let theta: Float64Array = Float64Array.from(start, (v, k) => (fixed[k] ? held[k] : v));
  const path: number[] = [];
  let ev = mustEvaluate(frame, theta);
  path.push(ev.criterion);
  const emIterations = opts.emIterations ?? EM_ITERATIONS;
  const dims = randomEffectCounts(frame, active);
  for (let it = 0; it < emIterations; it++) {
    checkCancelled(hooks);
    const sc = scoreAndInformation(frame, ev, active, false);
    const next = Float64Array.from(theta, (v, k) => (fixed[k] ? held[k] : Math.max(0, v - ((v * v) / dims[k]) * sc.gradient[k])));
    const c = criterionOrInfinity(frame, next);
    if (!c.evaluation || c.value > ev.criterion) {
      if (c.evaluation) releaseEvaluation(frame, c.evaluation);
      break;
    }
    theta = next;
    releaseEvaluation(frame, ev);
    ev = c.evaluation;
    path.push(ev.criterion);
    hooks.onProgress?.({ stage: `${stage}, EM warm start`, iteration: it + 1, criterion: ev.criterion });
  }
  let halvings = 0;
  let iterations = 0;
  /** Newton steps that used the residuals' observed curvature (newtonResidualDiagonal). */
  let curvatureSteps = 0;
  let outcome: RunRecord['outcome'] = 'max-iterations';
  let decrement = NaN;
  let sc = scoreAndInformation(frame, ev, active);
  const atZero = new Array<boolean>(nP).fill(false);
  const residual = frame.layout.parameters.map((par) => par.kind === 'residual');
  const p = frame.stats.fixed.length;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    checkCancelled(hooks);
    const free: number[] = [];
    for (let k = 0; k < nP; k++) {
      atZero[k] = theta[k] <= 0 && sc.gradient[k] >= 0;
      if (!atZero[k] && !fixed[k]) free.push(k);
    }
    const step = newtonStep(sc, free, nP, residual, ev.c, p);
    if (step.curvature) curvatureSteps++;
    decrement = step.decrement;
    if (decrement < DECREMENT_TOL) {
      outcome = 'converged';
      break;
    }
    let alpha = 1;
    let accepted: { theta: Float64Array; ev: Evaluation } | null = null;
    for (let hv = 0; hv <= MAX_HALVINGS; hv++) {
      const cand = Float64Array.from(theta);
      for (const k of free) cand[k] = Math.max(0, theta[k] + alpha * step.direction[k]);
      const c = criterionOrInfinity(frame, cand);
      if (c.evaluation && c.value <= ev.criterion + ROUNDING_SLACK * Math.abs(ev.criterion)) {
        accepted = { theta: cand, ev: c.evaluation };
        break;
      }
      if (c.evaluation) releaseEvaluation(frame, c.evaluation);
      alpha /= 2;
      halvings++;
    }
    if (!accepted) {
      outcome = 'stalled';
      break;
    }
    const change = Math.abs(ev.criterion - accepted.ev.criterion);
    let maxRel = 0;
    for (let k = 0; k < nP; k++) maxRel = Math.max(maxRel, Math.abs(accepted.theta[k] - theta[k]) / Math.max(Math.abs(theta[k]), 1e-300));
    theta = accepted.theta;
    // the score of the superseded iterate holds none of its buffers (only its C, allocated apart)
    releaseEvaluation(frame, ev);
    ev = accepted.ev;
    sc = scoreAndInformation(frame, ev, active);
    path.push(ev.criterion);
    hooks.onProgress?.({ stage, iteration: iterations + 1, criterion: ev.criterion });
    if (change < CRITERION_TOL * Math.max(1, Math.abs(ev.criterion)) && maxRel < PARAMETER_TOL) {
      iterations++;
      outcome = 'converged';
      break;
    }
  }
  for (let k = 0; k < nP; k++) atZero[k] = theta[k] <= 0;
  return {
    evaluation: ev,
    score: sc,
    atZero,
    run: {
      method:
        curvatureSteps > 0
          ? 'average-information REML (each trial residual variance at its observed curvature), EM warm start, projected step-halving'
          : 'average-information REML, EM warm start, projected step-halving',
      start: Object.fromEntries(frame.layout.parameters.map((p, k) => [p.name, start[k]])),
      iterations,
      emIterations,
      criterionPath: path,
      stepHalvings: halvings,
      convergence: `AI Newton decrement g'AI^-1 g < ${DECREMENT_TOL} on the free parameters (components at zero with non-negative score held there), or an accepted step changing -2 logLik by < ${CRITERION_TOL} relative and every parameter by < ${PARAMETER_TOL} relative; a step is accepted unless it raises -2 logLik by more than ${ROUNDING_SLACK} relative (its rounding)`,
      outcome,
      finalDecrement: decrement,
      elapsedMs: Date.now() - began,
    },
  };
}

function newtonStep(sc: ScoreAndInformation, free: readonly number[], nP: number, residual: readonly boolean[], c: Float64Array, p: number): { direction: Float64Array; decrement: number; curvature: boolean } {
  const f = free.length;
  const direction = new Float64Array(nP);
  if (f === 0) return { direction, decrement: 0, curvature: false };
  let curvature = false;
  const g = Float64Array.from(free, (k) => sc.gradient[k]);
  let x: Float64Array | null = null;
  let notPositiveDefinite = false;
  const w = f > BORDERED_MIN_FREE ? lowRankFactor(sc.v, c, nP, p) : null;
  if (w) {
    // the residuals' observed curvature first; where that is not positive definite, plain AI
    const corrected = borderedFactor(newtonResidualDiagonal(sc, w, p), w, p, nP, free, residual);
    if (corrected && 'solve' in corrected) {
      x = corrected.solve(g);
      curvature = sc.residualExpected.some((e) => e > 0);
    } else {
      const b = borderedFactor(sc.a0, w, p, nP, free, residual);
      if (b && 'solve' in b) x = b.solve(g);
      else if (b) notPositiveDefinite = true;
    }
  }
  if (!x && !notPositiveDefinite) x = denseSolve(sc, free, nP, g);
  // AI singular along some direction: fall back to a scaled gradient step on the diagonal.
  if (!x) {
    const step = new Float64Array(f);
    for (let i = 0; i < f; i++) step[i] = g[i] / Math.max(sc.informationEntry(free[i], free[i]), 1e-300);
    x = step;
  }
  let decrement = 0;
  for (let i = 0; i < f; i++) {
    direction[free[i]] = -x[i];
    decrement += g[i] * x[i];
  }
  return { direction, decrement, curvature };
}

/**
 * a0 with each residual parameter's diagonal moved from the AI value to the observed curvature
 * 2 AI_kk - E_kk where E_kk is known (ScoreAndInformation.residualExpected). With one residual
 * per trial each is estimated from a trial's few degrees of freedom, and there AI_kk and the
 * observed curvature differ by tens of per cent even at the optimum, so plain AI steps converge
 * only linearly (rate |1 - H_kk / AI_kk|). The correction is kept to at least a quarter of AI_kk
 * (the curvature can turn negative far from the optimum); step-halving still guards the step.
 */
function newtonResidualDiagonal(sc: ScoreAndInformation, w: Float64Array, p: number): SymmetricArrowhead {
  const a = sc.a0.clone();
  for (let k = a.shared; k < a.n; k++) {
    const e = sc.residualExpected[k];
    if (!(e > 0)) continue;
    let ai = a.diagonal[k];
    for (let j = 0; j < p; j++) ai -= w[k * p + j] * w[k * p + j];
    if (!(ai > 0)) continue;
    a.diagonal[k] += Math.max(2 * ai - e, 0.25 * ai) - ai;
  }
  return a;
}

/** Cholesky solve on the free block of the AI matrix; null when it is not positive definite. */
function denseSolve(sc: ScoreAndInformation, free: readonly number[], nP: number, g: Float64Array): Float64Array | null {
  const f = free.length;
  const a: Matrix = { rows: f, cols: f, data: new Float64Array(f * f) };
  const ai = sc.ai; // a getter: read once, not per entry
  for (let i = 0; i < f; i++) for (let j = 0; j < f; j++) a.data[i * f + j] = ai[free[i] * nP + free[j]];
  try {
    return cholSolve(cholesky(a), g);
  } catch (err) {
    if (!(err instanceof NotPositiveDefiniteError)) throw err;
    return null;
  }
}

/** Number of random effects (or observations, for a residual) each parameter governs: the EM divisor. */
function randomEffectCounts(frame: ModelFrame, active: readonly ActiveParameter[][]): Float64Array {
  const out = new Float64Array(frame.layout.parameters.length);
  active.forEach((act, i) => {
    for (const a of act) out[a.index] += a.columns ? a.columns.length : frame.stats.trials[i].n;
  });
  return out;
}

function mustEvaluate(frame: ModelFrame, theta: Float64Array): Evaluation {
  const c = criterionOrInfinity(frame, theta);
  if (!c.evaluation) throw new Error('REML criterion is not finite at the start values');
  return c.evaluation;
}

function checkCancelled(hooks: OneStageHooks): void {
  if (hooks.signal?.aborted) throw new OneStageCancelledError();
}
