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
  /** Why the choice was not made by AICc, when it was not. */
  readonly fallback: string | null;
}

export function chooseTrialModel(d: TrialRateData, choice: RateModelChoice): TrialChoice {
  if (choice !== 'best') return { chosen: fitRateModel(d, choice), table: null, fallback: null };
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
  if (bestIdx >= 0) return { chosen: fits[bestIdx], table, fallback: null };
  // No AICc to compare (too few plots) or nothing converged: the quadratic if it fitted,
  // else the first curve that did; when none did, the quadratic's failure is what is shown.
  const usable = [fits[1], ...fits].find((f) => f.converged) ?? fits[1];
  return { chosen: usable, table, fallback: usable.converged ? `no curve could be compared by AICc (too few plots); ${usable.model} used` : 'no curve could be fitted' };
}
