// Fits the requested curve(s) to one trial and, for 'best', picks the model with the lowest
// AICc among those that converged (Hurvich & Tsai 1989 small-sample correction; Gaussian
// log-likelihood at the least-squares fit, as R's logLik for lm and nls).
import type { TrialRateData } from './rateData.js';
import type { FitOutcome } from './fitOutcome.js';
import type { AiccRow, RateModel, RateModelChoice } from './types.js';
import { RATE_MODELS } from './types.js';
import { fitPolynomial } from './fitPolynomial.js';
import { fitLinearPlateau } from './fitLinearPlateau.js';
import { fitQuadraticPlateau } from './fitQuadraticPlateau.js';
import { fitExponential } from './fitExponential.js';

export function fitRateModel(d: TrialRateData, model: RateModel): FitOutcome {
  switch (model) {
    case 'linear':
      return fitPolynomial(d, 1);
    case 'quadratic':
      return fitPolynomial(d, 2);
    case 'linear-plateau':
      return fitLinearPlateau(d);
    case 'quadratic-plateau':
      return fitQuadraticPlateau(d);
    case 'exponential':
      return fitExponential(d);
  }
}

export function gaussianLogLik(rss: number, n: number): number {
  return -0.5 * n * (Math.log((2 * Math.PI * rss) / n) + 1);
}

export function aicc(rss: number, n: number, k: number): number {
  if (!(n - k - 1 > 0) || !(rss > 0)) return NaN;
  return -2 * gaussianLogLik(rss, n) + 2 * k + (2 * k * (k + 1)) / (n - k - 1);
}

export interface TrialChoice {
  readonly chosen: FitOutcome;
  readonly table: AiccRow[] | null;
}

export function chooseTrialModel(d: TrialRateData, choice: RateModelChoice): TrialChoice {
  if (choice !== 'best') return { chosen: fitRateModel(d, choice), table: null };
  const fits = RATE_MODELS.map((m) => fitRateModel(d, m));
  const scores = fits.map((f) => (f.curve ? aicc(f.rss, f.n, f.parameters) : NaN));
  let bestIdx = -1;
  fits.forEach((f, i) => {
    if (f.converged && Number.isFinite(scores[i]) && (bestIdx < 0 || scores[i] < scores[bestIdx])) bestIdx = i;
  });
  const bestScore = bestIdx >= 0 ? scores[bestIdx] : NaN;
  const table: AiccRow[] = fits.map((f, i) => ({
    model: f.model,
    parameters: f.parameters,
    rss: f.curve ? f.rss : null,
    logLik: f.curve ? gaussianLogLik(f.rss, f.n) : null,
    aicc: Number.isFinite(scores[i]) ? scores[i] : null,
    deltaAicc: Number.isFinite(scores[i]) && Number.isFinite(bestScore) ? scores[i] - bestScore : null,
    converged: f.converged,
    note: f.note ?? (f.curve && !Number.isFinite(scores[i]) ? 'too few plots for AICc' : null),
  }));
  // When nothing converged, show the first attempted fit so the failure is visible.
  return { chosen: bestIdx >= 0 ? fits[bestIdx] : fits[1], table };
}
