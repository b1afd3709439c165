// Linear and quadratic curves with block offsets: closed-form least squares by QR.
import type { TrialRateData } from './rateData.js';
import { fitWithOffsets } from './leastSquares.js';
import { failedFit, type FitOutcome } from './fitOutcome.js';

export function fitPolynomial(d: TrialRateData, degree: 1 | 2): FitOutcome {
  const model = degree === 1 ? 'linear' : 'quadratic';
  const n = d.y.length;
  if (d.distinctRates.length < degree + 1) return failedFit(model, n, `needs at least ${degree + 1} distinct rates; this trial has ${d.distinctRates.length}`);
  const cols = [d.rate];
  if (degree === 2) cols.push(d.rate.map((x) => x * x));
  const fit = fitWithOffsets(d, cols);
  const s = fit.curveStart;
  for (let j = 0; j <= degree; j++) {
    const idx = j === 0 ? 0 : s + j - 1;
    if (Number.isNaN(fit.coef[idx])) return failedFit(model, n, 'a curve coefficient is aliased with the block offsets', 'QR least squares');
  }
  const params: Record<string, number> = degree === 1 ? { intercept: fit.coef[0], slope: fit.coef[s] } : { intercept: fit.coef[0], linear: fit.coef[s], quadratic: fit.coef[s + 1] };
  return { model, curve: { model, params }, rss: fit.rss, parameters: fit.rank + 1, n, converged: true, method: 'QR least squares (closed form)', evaluations: 1, note: null };
}
