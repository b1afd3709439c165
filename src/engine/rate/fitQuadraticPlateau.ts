// Quadratic-plateau, y = a + b m - b m^2/(2 x0) + block with m = min(x, x0): a quadratic
// rising to its vertex at the join point x0 and flat beyond. For fixed x0 the model is
// linear in a, b and the offsets, and the profile is smooth in x0 (the join is C1), so x0 is
// found by profiling between the lowest positive rate and the highest rate. A join at
// either end means no plateau is seen within the tested rates: non-convergence.
import type { TrialRateData } from './rateData.js';
import { fitWithOffsets } from './leastSquares.js';
import { failedFit, type FitOutcome } from './fitOutcome.js';
import { profileMinimum } from './profileSearch.js';
import { QUADRATIC_PLATEAU_SHAPE, polishSeparable } from './separableCurve.js';
import { jacobianCovariance, separableStandardErrors } from './standardErrors.js';

const GRID_POINTS = 201;

export function fitQuadraticPlateau(d: TrialRateData): FitOutcome {
  const n = d.y.length;
  const positive = d.distinctRates.filter((x) => x > 0);
  if (d.distinctRates.length < 3 || positive.length < 2) return failedFit('quadratic-plateau', n, `needs at least 3 distinct rates; this trial has ${d.distinctRates.length}`);
  const lo = positive[0];
  const hi = positive[positive.length - 1];
  const grid = Array.from({ length: GRID_POINTS }, (_, i) => lo + ((hi - lo) * i) / (GRID_POINTS - 1));
  const fitAt = (x0: number) =>
    fitWithOffsets(d, [
      d.rate.map((x) => {
        const m = Math.min(x, x0);
        return m - (m * m) / (2 * x0);
      }),
    ]);
  const res = profileMinimum((x0) => {
    const fit = fitAt(x0);
    const b = fit.coef[fit.curveStart];
    // df/dx0 = b m^2 / (2 x0^2): b x^2/(2 x0^2) below the join, b/2 on the plateau.
    let g = 0;
    for (let i = 0; i < n; i++) {
      const m = Math.min(d.rate[i], x0);
      g += fit.residuals[i] * ((b * m * m) / (2 * x0 * x0));
    }
    return { rss: fit.rss, derivative: -2 * g };
  }, grid);
  const profiled = fitAt(res.theta);
  if (Number.isNaN(profiled.coef[profiled.curveStart])) return failedFit('quadratic-plateau', n, 'the curve is aliased with the block offsets', res.method);
  const pol = polishSeparable(d, QUADRATIC_PLATEAU_SHAPE, profiled, res.theta, res.atBoundary === null);
  const a = pol.offsetCoef[0];
  const b = pol.b;
  const x0 = pol.theta;
  const note =
    res.atBoundary === 'upper'
      ? 'join point ran to the highest tested rate: no plateau within the tested range'
      : res.atBoundary === 'lower'
        ? 'join point ran to the lowest tested rate: the whole response happens below it'
        : pol.lmConverged
          ? null
          : `Levenberg–Marquardt polish stopped with relative offset ${pol.relativeOffset.toExponential(2)}`;
  const cov = jacobianCovariance(pol.jacobian, pol.rss);
  return {
    model: 'quadratic-plateau',
    curve: { model: 'quadratic-plateau', params: { intercept: a, linear: b, quadratic: -b / (2 * x0), join: x0, plateau: a + (b * x0) / 2 } },
    rss: pol.rss,
    parameters: profiled.rank + 2,
    n,
    converged: res.atBoundary === null && pol.lmConverged,
    method: `profiled least squares over the join point (${res.method}), Levenberg–Marquardt polish (${pol.iterations} iterations, relative offset ${pol.relativeOffset.toExponential(1)})`,
    evaluations: res.evaluations + pol.iterations,
    note,
    standardErrors: separableStandardErrors(cov, {
      intercept: [1, 0, 0],
      linear: [0, 1, 0],
      join: [0, 0, 1],
      quadratic: [0, -1 / (2 * x0), b / (2 * x0 * x0)],
      plateau: [1, x0 / 2, b / 2],
    }),
  };
}
