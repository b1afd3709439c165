// The crossed model with one residual variance per trial (site-year): V = R + Z G Z', R
// block-diagonal with r_i I in trial i. The residual can no longer be profiled out, so every
// variance is a parameter: the terms' variances v_k and the trials' residuals r_i. Within trial i,
// V0_i = r_i I + v_trial 11' + v_block BB' + v_txtrial TT' is factored on its own; the shared
// effects (site, year and their treatment interactions) enter as in the common-residual model,
// so the arrowhead of crossedLikelihood.ts, run with the residual variance at 1 and theta_k =
// sqrt(v_k), gives log|V|, log|X'V^-1X| and r'V^-1r:
//   -2 REML log-likelihood = (N - p) log 2 pi + log|V| + log|X'V^-1X| + r'V^-1 r.
// The evaluation it returns has sigma2 = 1, so the common model's predictions, BLUPs and
// committee view read it unchanged (every variance there is sigma2 theta² = v).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, layoutFactor, type CrossedEvaluation, type TrialPieces } from './crossedLikelihood.js';
import { forwardSolve } from './denseSmall.js';

/** Each trial's likelihood pieces at term variances v and residuals r (absolute units). */
export function perTrialPieces(d: CrossedData, L: CrossedLayout, v: ArrayLike<number>, r: ArrayLike<number>): TrialPieces[] | null {
  const g = (k: number) => (k >= 0 ? v[k] : 0);
  const m = 1 + L.t;
  const out: TrialPieces[] = [];
  for (let i = 0; i < d.trials.length; i++) {
    const tr = d.trials[i];
    const f = layoutFactor(tr, m, g(L.at.trial), g(L.at.block), g(L.at['treatment-by-trial']), r[i]);
    if (!f) return null;
    const n = tr.y.length;
    const ly = Float64Array.from(tr.y);
    forwardSolve(f.l, n, n, ly);
    const b = new Float64Array(m);
    let c = 0;
    for (let p = 0; p < n; p++) {
      c += ly[p] * ly[p];
      for (let q = 0; q < m; q++) b[q] += f.lk[p * m + q] * ly[p];
    }
    out.push({ a: f.a, b, c, logDet: f.logDet, layout: f });
  }
  return out;
}

/** The model at term variances v (one per L.terms) and residuals r (one per trial); null when not positive definite. */
export function evaluatePerTrial(d: CrossedData, L: CrossedLayout, v: ArrayLike<number>, r: ArrayLike<number>): CrossedEvaluation | null {
  for (let i = 0; i < r.length; i++) if (!(r[i] > 0)) return null;
  const pieces = perTrialPieces(d, L, v, r);
  if (!pieces) return null;
  const theta = Float64Array.from(v, (x) => Math.sqrt(Math.max(0, x)));
  const ev = evaluateCrossed(d, L, theta, pieces);
  if (!ev) return null;
  const criterion = (d.nObservations - L.p) * Math.log(2 * Math.PI) + ev.logDetH + ev.logDetXHX + ev.rHr;
  return { ...ev, sigma2: 1, criterion };
}
