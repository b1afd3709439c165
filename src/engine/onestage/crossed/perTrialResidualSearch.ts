// AI-REML for the per-trial-residual crossed model: Newton steps on all variances at once (the
// terms' v_k and every trial's r_i) with the average-information matrix in place of the Hessian,
// its system solved by preconditioned conjugate gradients (perTrialResidualSolve.ts). As in the
// common-residual search (averageInformationSearch.ts): a term at zero whose gradient points
// below zero is held there (projected Newton step), variances well away from zero move on the
// log scale (the residuals always: they stay positive), each step is halved until the criterion
// falls.
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import { evaluatePerTrial } from './perTrialResidualModel.js';
import { perTrialDerivatives, type PerTrialDerivatives } from './perTrialResidualDerivatives.js';
import { informationSolver } from './perTrialResidualSolve.js';

export interface PerTrialOptimum {
  readonly evaluation: CrossedEvaluation;
  readonly v: Float64Array;
  readonly r: Float64Array;
  readonly iterations: number;
  readonly evaluations: number;
  readonly stepHalvings: number;
  /** Conjugate-gradient iterations over all Newton steps. */
  readonly cgIterations: number;
  readonly finalDecrement: number;
  readonly converged: boolean;
  readonly criterionPath: number[];
  /** Derivatives at the returned point when the last pass was there. */
  readonly derivatives: PerTrialDerivatives | null;
  /** Terms free at the end (not held at zero). */
  readonly freeTerms: boolean[];
}

export interface PerTrialSearchOptions {
  readonly maxIterations?: number;
  readonly signal?: AbortSignal;
  readonly onIteration?: (iteration: number, criterion: number) => void;
}

export function perTrialSearch(d: CrossedData, L: CrossedLayout, v0: ArrayLike<number>, r0: ArrayLike<number>, fixedZero: readonly number[], o: PerTrialSearchOptions = {}): PerTrialOptimum {
  const nT = L.terms.length;
  let v = Float64Array.from(v0);
  for (const k of fixedZero) v[k] = 0;
  let r = Float64Array.from(r0);
  let ev = evaluatePerTrial(d, L, v, r);
  if (!ev) throw new Error('the fixed effects are not estimable from these trials');
  let evaluations = 1;
  let halvings = 0;
  let cgIterations = 0;
  let decrement = Infinity;
  const path = [ev.criterion];
  let der: PerTrialDerivatives | null = null;
  let freeTerm: boolean[] = [];
  // the predicted remaining decrease of the criterion, g'AI^-1 g / 2: below 1e-8 the log-likelihood is
  // settled far inside any reference's tolerance; the AI steps converge only linearly here (AI is
  // far from the Hessian in the residuals of trials with few plots), so a tighter stop costs steps
  const tolerance = Math.max(1e-8, 1e-14 * Math.abs(ev.criterion));
  const maxIterations = o.maxIterations ?? 60;
  const result = (iterations: number, converged: boolean, atLast: boolean): PerTrialOptimum => ({
    evaluation: ev!,
    v,
    r,
    iterations,
    evaluations,
    stepHalvings: halvings,
    cgIterations,
    finalDecrement: decrement,
    converged,
    criterionPath: path,
    derivatives: atLast ? der : null,
    freeTerms: freeTerm,
  });
  for (let iter = 1; iter <= maxIterations; iter++) {
    if (o.signal?.aborted) throw new Error('one-stage fit cancelled');
    der = perTrialDerivatives(d, L, ev);
    const g = der.gradient;
    freeTerm = Array.from({ length: nT }, (_, k) => !fixedZero.includes(k) && (v[k] > 0 || g[k] < 0));
    const solver = informationSolver(der, nT, freeTerm);
    const s = solver.solve(g);
    cgIterations += s.iterations;
    // a solve that stopped short still gives a descent direction (CG iterates are)
    const step = s.x;
    decrement = 0;
    for (let i = 0; i < step.length; i++) decrement += g[i] * step[i];
    if (!(decrement >= 0)) return result(iter - 1, false, true);
    if (decrement < tolerance) return result(iter - 1, true, true);
    let t = 1;
    let accepted: CrossedEvaluation | null = null;
    let nextV = v;
    let nextR = r;
    const minT = decrement < 1e-6 ? 1 / 16 : 1e-10;
    while (t >= minT) {
      nextV = Float64Array.from(v, (x, k) => (freeTerm[k] ? moved(x, -t * step[k]) : x));
      nextR = Float64Array.from(r, (x, i) => x * Math.exp(Math.max(-3, Math.min(3, (-t * step[nT + i]) / x))));
      const trial = evaluatePerTrial(d, L, nextV, nextR);
      evaluations++;
      if (trial && trial.criterion < ev.criterion) {
        accepted = trial;
        break;
      }
      t /= 2;
      halvings++;
    }
    if (!accepted) return result(iter, decrement < 1e-6, true);
    const gain = ev.criterion - accepted.criterion;
    v = nextV;
    r = nextR;
    ev = accepted;
    path.push(ev.criterion);
    o.onIteration?.(iter, ev.criterion);
    if (gain < 1e-13 * Math.max(1, Math.abs(ev.criterion)) && decrement < 1e-8) return result(iter, true, false);
  }
  return result(maxIterations, false, false);
}

/** A variance moved by the Newton step s: on the log scale away from zero, projected onto zero near it. */
function moved(x: number, s: number): number {
  if (x < 1e-3) return Math.max(0, x + s);
  return x * Math.exp(Math.max(-3, Math.min(3, s / x)));
}
