// Profile-likelihood interval for one variance component: the values v where the REML
// criterion, minimised over the other parameters with this one held at v, rises by the
// chi-square(1) quantile above its minimum. A lower end of 0 means the interval reaches the
// boundary (the criterion at zero is still within the cut-off).
import { chisqQuantile } from '../stats/distributions.js';
import type { ModelFrame } from './remlCriterion.js';
import { optimiseReml, type OptimiseOutcome } from './optimise.js';
import type { OneStageHooks } from './types.js';

const RELATIVE_TOL = 1e-6;
const MAX_EXPANSIONS = 60;
const MAX_BISECTIONS = 60;

export function profileInterval(frame: ModelFrame, fit: OptimiseOutcome, k: number, confidence: number, hooks: OneStageHooks): { lower: number; upper: number } | null {
  const best = fit.evaluation.criterion;
  const target = best + chisqQuantile(confidence, 1);
  const estimate = fit.evaluation.theta[k];
  let warm = Float64Array.from(fit.evaluation.theta);
  const excess = (v: number): number => {
    const start = Float64Array.from(warm);
    start[k] = v;
    const o = optimiseReml(frame, start, hooks, { fixedValue: { index: k, value: v }, emIterations: 0, stage: `profile:${frame.layout.parameters[k].name}` });
    warm = Float64Array.from(o.evaluation.theta);
    return o.evaluation.criterion - target;
  };
  const scale = Math.max(estimate, 1e-8 * totalScale(fit));
  // upper end: expand until above the cut-off, then bisect
  let lo = estimate;
  let hi = estimate + scale;
  let expansions = 0;
  while (excess(hi) < 0) {
    lo = hi;
    hi = estimate + (hi - estimate) * 2;
    if (++expansions > MAX_EXPANSIONS) return null;
  }
  const upper = bisect(excess, lo, hi);
  warm = Float64Array.from(fit.evaluation.theta);
  let lower = 0;
  if (estimate > 0 && excess(0) > 0) {
    warm = Float64Array.from(fit.evaluation.theta);
    lower = bisect((v) => -excess(v), 0, estimate);
  }
  return { lower, upper };
}

/** Root of f between a (f < 0) and b (f > 0). */
function bisect(f: (v: number) => number, a: number, b: number): number {
  for (let i = 0; i < MAX_BISECTIONS && Math.abs(b - a) > RELATIVE_TOL * Math.max(Math.abs(a), Math.abs(b)); i++) {
    const mid = 0.5 * (a + b);
    if (f(mid) < 0) a = mid;
    else b = mid;
  }
  return 0.5 * (a + b);
}

function totalScale(fit: OptimiseOutcome): number {
  return fit.evaluation.theta.reduce((s, v) => s + v, 0);
}
