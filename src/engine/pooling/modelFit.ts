// One random-effects (or mixed-effects) fit: tau² by the chosen estimator, then the
// coefficients with Wald (normal) or Hartung–Knapp–Sidik–Jonkman (t on k - p df, variance
// scaled by q = sum w r² / (k - p)) inference. With the floor option q is replaced by
// max(1, q), so the interval is never narrower than Wald (t quantile > normal quantile).
import { Matrix } from '../linalg/matrix.js';
import { normalQuantile, normalUpper, tQuantile, tTwoSidedP } from '../stats/distributions.js';
import { estimateTau2, Tau2Estimate } from './tau2Estimators.js';
import type { IntervalMethod, Tau2Method } from './types.js';

export interface FitSettings {
  tau2: Tau2Method;
  interval: IntervalMethod;
  hksjFloor: boolean;
  confidence: number;
}

export interface CoefficientInference {
  estimate: number;
  /** Model-based SE sqrt((X'WX)^-_jj). */
  seConventional: number;
  /** SE used for the interval (KH-scaled for HKSJ). */
  se: number;
  statistic: number;
  p: number;
  lower: number;
  upper: number;
}

export interface ModelFit {
  readonly tau: Tau2Estimate;
  readonly k: number;
  readonly rank: number;
  readonly dfResidual: number;
  /** null when normal (Wald). */
  readonly df: number | null;
  readonly hksjScale: number | null;
  readonly scaleUsed: number;
  readonly coefficients: (CoefficientInference | null)[];
  readonly notes: string[];
}

/** `tau2Start`: see estimateTau2. */
export function fitModel(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, s: FitSettings, tau2Start?: number): ModelFit {
  const tau = estimateTau2(y, v, x, s.tau2, tau2Start);
  const fit = tau.fit;
  const k = x.rows;
  const dfResidual = k - fit.rank;
  const notes: string[] = [];
  let df: number | null = null;
  let hksjScale: number | null = null;
  let scaleUsed = 1;
  if (s.interval === 'hksj') {
    if (dfResidual >= 1) {
      hksjScale = fit.weightedRss / dfResidual;
      scaleUsed = s.hksjFloor ? Math.max(1, hksjScale) : hksjScale;
      df = dfResidual;
      if (hksjScale < 1 && !s.hksjFloor) notes.push(`HKSJ scale factor q = ${hksjScale.toPrecision(3)} < 1: the interval is narrower than a Wald interval with the same tau² would be; the floor option (max(1, q)) prevents this.`);
    } else {
      notes.push('HKSJ needs k greater than the number of coefficients; normal (Wald) interval used instead.');
    }
  }
  const alpha = 1 - s.confidence;
  const crit = df === null ? normalQuantile(1 - alpha / 2) : tQuantile(1 - alpha / 2, df);
  const coefficients: (CoefficientInference | null)[] = [];
  for (let j = 0; j < x.cols; j++) {
    const b = fit.beta[j];
    if (Number.isNaN(b)) {
      coefficients.push(null);
      continue;
    }
    const seConventional = Math.sqrt(fit.covariance.data[j * x.cols + j]);
    const se = Math.sqrt(scaleUsed) * seConventional;
    const statistic = b / se;
    const p = df === null ? 2 * normalUpper(Math.abs(statistic)) : tTwoSidedP(statistic, df);
    coefficients.push({ estimate: b, seConventional, se, statistic, p, lower: b - crit * se, upper: b + crit * se });
  }
  return { tau, k, rank: fit.rank, dfResidual, df, hksjScale, scaleUsed, coefficients, notes };
}
