// Linear-plateau, y = a + b min(x, x0) + block, solved exactly. Between two adjacent
// tested rates u_j < x0 < u_{j+1} the model is "a line through the lower rates and a free
// level for the upper ones" (x0 = level gain / slope), a linear least-squares problem; if
// that x0 falls inside the interval it is the interval's minimum, otherwise the minimum is
// at an end, where the fit is linear in a and b. Taking the best candidate over all
// intervals gives the global least-squares join — no starting values, no local minima.
// A join at the highest rate means no plateau is seen, one at the lowest positive rate
// means the join is not identified: both reported as non-convergence.
import type { TrialRateData } from './rateData.js';
import { fitWithOffsets, type LinearFit } from './leastSquares.js';
import { failedFit, type FitOutcome } from './fitOutcome.js';
import { LINEAR_PLATEAU_SHAPE, polishSeparable } from './separableCurve.js';
import { jacobianCovariance, separableStandardErrors } from './standardErrors.js';

export function fitLinearPlateau(d: TrialRateData): FitOutcome {
  const n = d.y.length;
  const u = d.distinctRates;
  const m = u.length;
  if (m < 3) return failedFit('linear-plateau', n, `needs at least 3 distinct rates; this trial has ${m}`);
  let evaluations = 0;
  let best: { x0: number; fit: LinearFit } | null = null;
  const consider = (x0: number, fit: LinearFit) => {
    if (Number.isNaN(fit.coef[fit.curveStart])) return;
    if (best === null || fit.rss < best.fit.rss) best = { x0, fit };
  };
  const atJoin = (x0: number) => {
    evaluations++;
    return fitWithOffsets(d, [d.rate.map((x) => Math.min(x, x0))]);
  };
  // Joins at the tested rates u_2 .. u_m (at least two rates on the rising line).
  for (let j = 1; j < m; j++) consider(u[j], atJoin(u[j]));
  // Interior of each interval (u_j, u_{j+1}), j = 2 .. m-1.
  for (let j = 1; j < m - 1; j++) {
    evaluations++;
    const lower = d.rate.map((x) => (x <= u[j] ? x : 0));
    const upper = d.rate.map((x) => (x >= u[j + 1] ? 1 : 0));
    const fit = fitWithOffsets(d, [lower, upper]);
    const b = fit.coef[fit.curveStart];
    const gain = fit.coef[fit.curveStart + 1];
    const x0 = gain / b;
    if (Number.isFinite(x0) && x0 > u[j] && x0 < u[j + 1]) {
      // Same fitted values as the join parameterisation; refit there for its coefficients.
      const at = atJoin(x0);
      consider(x0, at);
    }
  }
  const chosen = best as { x0: number; fit: LinearFit } | null;
  if (chosen === null) return failedFit('linear-plateau', n, 'the slope is aliased with the block offsets', 'exact search over join intervals');
  const { x0, fit } = chosen;
  const a = fit.coef[0];
  const b = fit.coef[fit.curveStart];
  const noPlateau = x0 >= u[m - 1];
  // A join at the lowest positive rate fits exactly as well as any join below it (no plots
  // in between): the join and the slope are then not identified.
  const stepOnly = x0 <= u[1];
  // No LM here (the exact search is already the minimum, and the kink defeats derivatives);
  // the Jacobian at the solution gives Gauss–Newton standard errors as nls reports them.
  const pol = polishSeparable(d, LINEAR_PLATEAU_SHAPE, fit, x0, false);
  const cov = noPlateau || stepOnly ? null : jacobianCovariance(pol.jacobian, fit.rss);
  return {
    model: 'linear-plateau',
    curve: { model: 'linear-plateau', params: { intercept: a, slope: b, join: x0, plateau: a + b * x0 } },
    rss: fit.rss,
    parameters: fit.rank + 2,
    n,
    converged: !noPlateau && !stepOnly,
    method: 'exact least squares over join intervals',
    evaluations,
    note: noPlateau
      ? 'join point at the highest tested rate: no plateau within the tested range'
      : stepOnly
        ? 'join point at the lowest positive rate: the whole response happens at or below it, so the join is not identified'
        : null,
    standardErrors: separableStandardErrors(cov, { intercept: [1, 0, 0], slope: [0, 1, 0], join: [0, 0, 1], plateau: [1, x0, b] }),
  };
}
