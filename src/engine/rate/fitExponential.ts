// Exponential rise to a maximum, y = a + b (1 - exp(-c x)) + block, by profiling c: for a
// fixed c the model is linear in a, b and the block offsets. The search runs over log c
// from a nearly straight line (c x_max = 0.001) to a step between the control and the
// lowest rate (c x_min = 50); a minimum at either end means the curve has no finite
// curvature that fits better, reported as non-convergence.
import type { TrialRateData } from './rateData.js';
import { fitWithOffsets } from './leastSquares.js';
import { failedFit, type FitOutcome } from './fitOutcome.js';
import { profileMinimum } from './profileSearch.js';
import { EXPONENTIAL_SHAPE, polishSeparable } from './separableCurve.js';
import { jacobianCovariance, separableStandardErrors } from './standardErrors.js';

const GRID_POINTS = 161;

export function fitExponential(d: TrialRateData): FitOutcome {
  const n = d.y.length;
  const positive = d.distinctRates.filter((x) => x > 0);
  if (d.distinctRates.length < 3 || positive.length < 2) return failedFit('exponential', n, `needs at least 3 distinct rates; this trial has ${d.distinctRates.length}`);
  const xMax = positive[positive.length - 1];
  const sLo = Math.log(1e-3 / xMax);
  const sHi = Math.log(50 / positive[0]);
  const grid = Array.from({ length: GRID_POINTS }, (_, i) => sLo + ((sHi - sLo) * i) / (GRID_POINTS - 1));
  const fitAt = (s: number) => {
    const c = Math.exp(s);
    return { c, fit: fitWithOffsets(d, [d.rate.map((x) => -Math.expm1(-c * x))]) };
  };
  const res = profileMinimum((s) => {
    const { c, fit } = fitAt(s);
    const b = fit.coef[fit.curveStart];
    // dRSS/ds = c dRSS/dc, with df/dc = b x exp(-c x).
    let g = 0;
    for (let i = 0; i < n; i++) g += fit.residuals[i] * b * d.rate[i] * Math.exp(-c * d.rate[i]);
    return { rss: fit.rss, derivative: -2 * c * g };
  }, grid);
  const profiled = fitAt(res.theta);
  if (Number.isNaN(profiled.fit.coef[profiled.fit.curveStart])) return failedFit('exponential', n, 'the rise is aliased with the block offsets', res.method);
  const pol = polishSeparable(d, EXPONENTIAL_SHAPE, profiled.fit, profiled.c, res.atBoundary === null);
  const a = pol.offsetCoef[0];
  const b = pol.b;
  const c = pol.theta;
  const note =
    res.atBoundary === 'lower'
      ? 'curvature ran to its lower search limit: the response is effectively a straight line'
      : res.atBoundary === 'upper'
        ? 'curvature ran to its upper search limit: the response is a step between the control and the lowest rate'
        : pol.lmConverged
          ? null
          : `Levenberg–Marquardt polish stopped with relative offset ${pol.relativeOffset.toExponential(2)}`;
  const cov = jacobianCovariance(pol.jacobian, pol.rss);
  return {
    model: 'exponential',
    curve: { model: 'exponential', params: { intercept: a, rise: b, curvature: c, asymptote: a + b } },
    rss: pol.rss,
    parameters: profiled.fit.rank + 2,
    n,
    converged: res.atBoundary === null && pol.lmConverged,
    method: `profiled least squares over log curvature (${res.method}), Levenberg–Marquardt polish (${pol.iterations} iterations, relative offset ${pol.relativeOffset.toExponential(1)})`,
    evaluations: res.evaluations + pol.iterations,
    note,
    standardErrors: separableStandardErrors(cov, { intercept: [1, 0, 0], rise: [0, 1, 0], curvature: [0, 0, 1], asymptote: [1, 1, 0] }),
  };
}
