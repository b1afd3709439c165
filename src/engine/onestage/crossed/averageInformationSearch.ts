// AI-REML for the crossed model: Newton steps on the variance ratios gamma_k = theta_k² with the
// average-information matrix in place of the Hessian (Gilmour, Thompson & Cullis 1995), the
// residual variance profiled out. Bounds: a ratio at zero whose gradient points below zero is
// held there (a projected Newton step, Bertsekas 1982), the others are moved and projected
// back onto gamma >= 0 (ratios well away from zero move on the log scale); each step is halved
// until the criterion falls. Returns null when it cannot make progress (the caller then falls
// back to the derivative-free search).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, type CrossedEvaluation } from './crossedLikelihood.js';
import { crossedDerivatives, type CrossedDerivatives } from './crossedDerivatives.js';
import { solveSymmetric } from './denseSmall.js';

export interface AiSearchResult {
  readonly evaluation: CrossedEvaluation;
  /** Newton steps taken (each one derivative pass: gradient and AI matrix). */
  readonly iterations: number;
  /** Criterion evaluations, the start and every trial point of the step halvings included. */
  readonly evaluations: number;
  readonly stepHalvings: number;
  /** g'AI^-1 g over the free ratios at the end: twice the predicted remaining decrease. */
  readonly finalDecrement: number;
  readonly criterionPath: number[];
  /** The derivatives at the returned evaluation, when the last pass was there (Satterthwaite reuses them). */
  readonly derivatives: CrossedDerivatives | null;
}

export interface AiSearchOptions {
  readonly maxIterations?: number;
  /** Stop when the Newton decrement g'AI^-1 g falls below this (default 1e-11, or 1e-13 of the criterion when larger). */
  readonly tolerance?: number;
  readonly signal?: AbortSignal;
  readonly onIteration?: (iteration: number, criterion: number) => void;
}

export function averageInformationSearch(d: CrossedData, L: CrossedLayout, startTheta: ArrayLike<number>, fixedZero: readonly number[], o: AiSearchOptions = {}): AiSearchResult | null {
  const nT = L.terms.length;
  const maxIterations = o.maxIterations ?? 60;
  let tolerance = o.tolerance ?? 1e-11;
  let gamma = Float64Array.from({ length: nT }, (_, k) => (fixedZero.includes(k) ? 0 : startTheta[k] ** 2));
  let evaluations = 0;
  const evaluate = (g: Float64Array): CrossedEvaluation | null => {
    if (o.signal?.aborted) throw new Error('one-stage fit cancelled');
    evaluations++;
    return evaluateCrossed(d, L, Array.from(g, Math.sqrt));
  };
  let ev = evaluate(gamma);
  if (!ev) return null;
  // a predicted decrease below 1e-13 of the criterion is near its rounding (two starts' optima
  // differ by 1.4e-12 of it on the 2,920-trial bench network): confirming it would cost a
  // derivative pass (1e-12 moved the small networks' SEs by 2e-6 relative against pbkrtest's)
  if (o.tolerance === undefined) tolerance = Math.max(tolerance, 1e-13 * Math.abs(ev.criterion));
  const path = [ev.criterion];
  let halvings = 0;
  let decrement = Infinity;
  let last: { der: CrossedDerivatives; at: CrossedEvaluation } | null = null;
  for (let iter = 1; iter <= maxIterations; iter++) {
    const der = crossedDerivatives(d, L, ev);
    last = { der, at: ev };
    const g = der.gradient;
    const free: number[] = [];
    for (let k = 0; k < nT; k++) if (!fixedZero.includes(k) && (gamma[k] > 0 || g[k] < 0)) free.push(k);
    if (free.length === 0) return done(iter - 1, 0);
    const step = newtonStep(der.information, g, free, nT);
    if (!step) return null;
    decrement = 0;
    free.forEach((k, i) => (decrement -= g[k] * step[i]));
    if (!(decrement >= 0)) return null;
    if (decrement < tolerance) return done(iter - 1, decrement);
    let t = 1;
    let accepted: CrossedEvaluation | null = null;
    let next = gamma;
    // near the optimum (decrement below 1e-6) a step that does not lower the criterion after a
    // few halvings is at rounding level: stop there rather than halve on
    const minT = decrement < 1e-6 ? 1 / 16 : 1e-10;
    while (t >= minT) {
      next = Float64Array.from(gamma);
      free.forEach((k, i) => (next[k] = moved(gamma[k], t * step[i])));
      const trial = evaluate(next);
      if (trial && trial.criterion < ev.criterion) {
        accepted = trial;
        break;
      }
      t /= 2;
      halvings++;
    }
    if (!accepted) {
      // no decrease along the step: at the optimum to rounding, or the step is useless
      return decrement < 1e-6 ? done(iter, decrement) : null;
    }
    const gain = ev.criterion - accepted.criterion;
    gamma = next;
    ev = accepted;
    path.push(ev.criterion);
    o.onIteration?.(iter, ev.criterion);
    if (gain < 1e-13 * Math.max(1, Math.abs(ev.criterion)) && decrement < 1e-8) return done(iter, decrement);
  }
  return null;

  function done(iterations: number, finalDecrement: number): AiSearchResult {
    return { evaluation: ev!, iterations, evaluations, stepHalvings: halvings, finalDecrement, criterionPath: path, derivatives: last && last.at === ev ? last.der : null };
  }
}

/** Solve AI_ff s = -g_f; a small ridge is added while AI_ff is not positive definite. */
function newtonStep(ai: Float64Array, g: Float64Array, free: readonly number[], nT: number): Float64Array | null {
  const n = free.length;
  const a = new Float64Array(n * n);
  const rhs = new Float64Array(n);
  let scale = 0;
  free.forEach((k, i) => {
    rhs[i] = -g[k];
    free.forEach((l, j) => (a[i * n + j] = ai[k * nT + l]));
    scale = Math.max(scale, Math.abs(a[i * n + i]));
  });
  if (!(scale > 0)) return null;
  for (let ridge = 0; ridge < 1; ridge = ridge === 0 ? 1e-10 : ridge * 100) {
    const m = Float64Array.from(a);
    for (let i = 0; i < n; i++) m[i * n + i] += ridge * scale;
    const s = solveSymmetric(m, rhs, n);
    if (s) return s;
  }
  return null;
}

/**
 * A ratio moved by the Newton step s: multiplicatively, gamma exp(s / gamma), for a ratio well
 * away from zero (the same first-order step, taken on the log scale, which suits variance ratios
 * far from their optimum better); additively and projected onto zero for a ratio near zero.
 */
function moved(gamma: number, s: number): number {
  if (gamma < 1e-3) return Math.max(0, gamma + s);
  return gamma * Math.exp(Math.max(-3, Math.min(3, s / gamma)));
}
