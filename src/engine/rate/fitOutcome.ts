// What every curve fit returns, whatever method produced it.
import type { Curve } from './curves.js';
import type { RateModel } from './types.js';

export interface FitOutcome {
  readonly model: RateModel;
  /** The fitted curve; present even when not converged so the failure can be shown. */
  readonly curve: Curve | null;
  readonly rss: number;
  /** Parameters for AICc: rank of the linear part + nonlinear parameters + residual variance. */
  readonly parameters: number;
  readonly n: number;
  readonly converged: boolean;
  readonly method: string;
  readonly evaluations: number;
  readonly note: string | null;
  /** Asymptotic standard errors of the curve parameters (empty when not available). */
  readonly standardErrors: Readonly<Record<string, number>>;
}

export function failedFit(model: RateModel, n: number, note: string, method = 'none'): FitOutcome {
  return { model, curve: null, rss: NaN, parameters: 0, n, converged: false, method, evaluations: 0, note, standardErrors: {} };
}
