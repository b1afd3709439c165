// REML for the crossed model: the residual variance is profiled out and the variance ratios
// are found by AI-REML (Newton steps with the average-information matrix from the analytic
// derivatives, averageInformationSearch.ts). When that search cannot make progress, the
// relative standard deviations are found instead by a restarted Nelder–Mead simplex
// (derivative-free, dependable in the few dimensions here), polished by Newton steps on
// numerical derivatives.
import { nelderMeadRestarted } from '../../rate/mixed/nelderMead.js';
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, type CrossedEvaluation } from './crossedLikelihood.js';
import { averageInformationSearch } from './averageInformationSearch.js';
import { solveSymmetric } from './denseSmall.js';
import type { CrossedDerivatives } from './crossedDerivatives.js';

export { solveSymmetric };

export interface CrossedOptimum {
  readonly evaluation: CrossedEvaluation;
  /** Which search found the optimum. */
  readonly search: 'average-information' | 'simplex';
  /** AI-REML Newton steps (0 for the simplex). */
  readonly iterations: number;
  /** Criterion evaluations of the search that found the optimum. */
  readonly evaluations: number;
  readonly stepHalvings: number;
  readonly finalDecrement: number;
  readonly converged: boolean;
  readonly criterionPath: number[];
  /** Derivatives at the optimum when the AI-REML search left them there. */
  readonly derivatives: CrossedDerivatives | null;
}

export interface OptimiseHooks {
  readonly signal?: AbortSignal;
  readonly onEvaluation?: (count: number, criterion: number) => void;
}

/** Minimise the profiled criterion over theta, the terms in `fixedZero` held at zero. */
export function optimiseCrossed(d: CrossedData, L: CrossedLayout, start: ArrayLike<number>, fixedZero: readonly number[] = [], hooks: OptimiseHooks = {}): CrossedOptimum {
  const ai = averageInformationSearch(d, L, start, fixedZero, { signal: hooks.signal, onIteration: hooks.onEvaluation });
  if (ai) return { evaluation: ai.evaluation, search: 'average-information', iterations: ai.iterations, evaluations: ai.evaluations, stepHalvings: ai.stepHalvings, finalDecrement: ai.finalDecrement, converged: true, criterionPath: ai.criterionPath, derivatives: ai.derivatives };
  return simplexSearch(d, L, start, fixedZero, hooks);
}

/** The derivative-free search: restarted simplex on theta, Newton polish on central differences. */
export function simplexSearch(d: CrossedData, L: CrossedLayout, start: ArrayLike<number>, fixedZero: readonly number[], hooks: OptimiseHooks): CrossedOptimum {
  const nT = L.terms.length;
  const free = Array.from({ length: nT }, (_, k) => k).filter((k) => !fixedZero.includes(k));
  const full = (x: ArrayLike<number>): Float64Array => {
    const th = new Float64Array(nT);
    free.forEach((k, i) => (th[k] = Math.abs(x[i])));
    return th;
  };
  let count = 0;
  const path: number[] = [];
  const f = (x: Float64Array): number => {
    if (hooks.signal?.aborted) throw new Error('one-stage fit cancelled');
    const ev = evaluateCrossed(d, L, full(x));
    count++;
    const v = ev ? ev.criterion : Infinity;
    if (count % 25 === 0) {
      path.push(v);
      hooks.onEvaluation?.(count, v);
    }
    return v;
  };
  if (free.length === 0) {
    const ev = evaluateCrossed(d, L, full([]));
    if (!ev) throw new Error('the fixed effects are not estimable from these trials');
    return { evaluation: ev, search: 'simplex', iterations: 0, evaluations: 1, stepHalvings: 0, finalDecrement: 0, converged: true, criterionPath: [ev.criterion], derivatives: null };
  }
  const x0 = free.map((k) => start[k]);
  // the simplex brings theta near the optimum; Newton steps finish it (quadratic convergence),
  // then one more simplex from there confirms that nothing better lies nearby
  const nm = nelderMeadRestarted(f, x0, { step: 0.3, fTolerance: 1e-9, xTolerance: 1e-5, maxEvaluations: 20000, maxRestarts: 3, restartTolerance: 1e-7 });
  let polished = newtonPolish(f, Float64Array.from(nm.x, Math.abs));
  let settled = nm.converged;
  if (nm.value - f(polished) > 1e-6) {
    const check = nelderMeadRestarted(f, polished, { step: 0.02, fTolerance: 1e-12, xTolerance: 1e-7, maxEvaluations: 20000, maxRestarts: 2, restartTolerance: 1e-10 });
    if (check.value < f(polished) - 1e-10) polished = newtonPolish(f, Float64Array.from(check.x, Math.abs));
    settled = check.converged;
  }
  const ev = evaluateCrossed(d, L, full(polished));
  if (!ev) throw new Error('the fixed effects are not estimable from these trials');
  return { evaluation: ev, search: 'simplex', iterations: 0, evaluations: count, stepHalvings: 0, finalDecrement: 0, converged: settled, criterionPath: path, derivatives: null };
}

/**
 * A few Newton steps on the coordinates away from zero (central differences, step 1e-4), each
 * kept only when it lowers the criterion: the simplex stops a little short of the optimum on
 * flat ridges, and the variance components are compared to 1e-4.
 */
function newtonPolish(f: (x: Float64Array) => number, x0: Float64Array): Float64Array {
  let x = Float64Array.from(x0);
  let fx = f(x);
  const inner = Array.from(x, (v, i) => (v > 1e-3 ? i : -1)).filter((i) => i >= 0);
  const n = inner.length;
  if (n === 0) return x;
  for (let iter = 0; iter < 8; iter++) {
    const h = 1e-4;
    const g = new Float64Array(n);
    const H = new Float64Array(n * n);
    const at = (di: number, dj: number, si: number, sj: number) => {
      const y = Float64Array.from(x);
      y[inner[di]] += si * h;
      if (dj >= 0) y[inner[dj]] += sj * h;
      return f(y);
    };
    for (let i = 0; i < n; i++) {
      const fp = at(i, -1, 1, 0);
      const fm = at(i, -1, -1, 0);
      g[i] = (fp - fm) / (2 * h);
      H[i * n + i] = (fp - 2 * fx + fm) / (h * h);
      for (let j = 0; j < i; j++) {
        const v = (at(i, j, 1, 1) - at(i, j, 1, -1) - at(i, j, -1, 1) + at(i, j, -1, -1)) / (4 * h * h);
        H[i * n + j] = v;
        H[j * n + i] = v;
      }
    }
    const step = solveSymmetric(H, g, n);
    if (!step) return x;
    let t = 1;
    let moved = false;
    while (t > 1e-3) {
      const y = Float64Array.from(x);
      for (let i = 0; i < n; i++) y[inner[i]] = Math.max(0, y[inner[i]] - t * step[i]);
      const fy = f(y);
      if (fy < fx) {
        moved = fx - fy > 1e-9;
        x = y;
        fx = fy;
        break;
      }
      t /= 2;
    }
    if (!moved) break;
  }
  return x;
}
