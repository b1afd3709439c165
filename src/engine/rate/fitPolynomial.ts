// Linear and quadratic curves with block offsets: closed-form least squares by QR.
import type { TrialRateData } from './rateData.js';
import { designMatrix, fitWithOffsets } from './leastSquares.js';
import { failedFit, type FitOutcome } from './fitOutcome.js';
import { jacobianCovariance } from './standardErrors.js';

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
  const names = degree === 1 ? ['intercept', 'slope'] : ['intercept', 'linear', 'quadratic'];
  const params: Record<string, number> = {};
  names.forEach((name, j) => (params[name] = fit.coef[j === 0 ? 0 : s + j - 1]));
  const x = designMatrix(d, fit, cols);
  const cov = jacobianCovariance(x, fit.rss);
  const standardErrors: Record<string, number> = {};
  if (cov) {
    const p = x.cols;
    // Intercept is design column 0; the curve columns are the last `degree`.
    names.forEach((name, j) => {
      const c = j === 0 ? 0 : p - degree + j - 1;
      standardErrors[name] = Math.sqrt(cov.data[c * p + c]);
    });
  }
  return { model, curve: { model, params }, rss: fit.rss, parameters: fit.rank + 1, n, converged: true, method: 'QR least squares (closed form)', evaluations: 1, note: null, standardErrors };
}
