// Fits the mixed quadratic rate response by REML:
//   y = b0 + b1 x + b2 x² + u0_t + u1_t x + u2_t x² + block_tb + e,
//   (u0, u1, u2)_t ~ N(0, G) unstructured, block_tb ~ N(0, s_b²), e ~ N(0, s²),
// on rates divided by the largest tested rate, then maps every estimate back to the
// original rate units (b_k and u_k scale by 1/scale^k, G and the fixed-effect covariance by
// the same factors on both sides). Several starting points, each a restarted Nelder–Mead;
// the best criterion wins and the spread of the starts' criteria is reported.
import type { MixedNetworkData } from './mixedData.js';
import { nelderMeadRestarted } from './nelderMead.js';
import { FIXED, choleskyFactor, parameterCount, remlDeviance, remlSolution, trialDeviations } from './profiledReml.js';

export interface MixedQuadraticFit {
  /** b0, b1, b2 in original rate units. */
  readonly fixed: [number, number, number];
  /** Their covariance s² (X'V⁻¹X)⁻¹ scaled back, 3 x 3 row-major. */
  readonly fixedCovariance: number[][];
  /** G in original rate units, 3 x 3. */
  readonly randomCovariance: number[][];
  /** Variance of each grouping factor (same order as data.grouping). */
  readonly groupingVariances: number[];
  readonly residualVariance: number;
  /** REML log-likelihood on lme4's scale (-deviance / 2). */
  readonly logLik: number;
  /** Trial deviations (u0, u1, u2) in original units, data.trials order. */
  readonly deviations: [number, number, number][];
  readonly converged: boolean;
  readonly evaluations: number;
  readonly starts: number;
  /** Largest minus smallest deviance reached over the starts (0 when all agree). */
  readonly startSpread: number;
  /**
   * A variance-covariance parameter sits on the boundary: a diagonal entry of the relative
   * Cholesky factor (or a relative block sd) below 1e-4, lme4's rule for a singular fit.
   */
  readonly singular: boolean;
  /** The optimised parameters (relative Cholesky entries, relative block sds), scaled units. */
  readonly theta: Float64Array;
}

export const SINGULAR_THETA = 1e-4;

export interface MixedFitOptions {
  readonly maxEvaluations?: number;
  /** How the criterion sums the responses (profiledReml.ts): per layout (default) or trial by trial. */
  readonly sums?: 'layout' | 'trial';
}

export function fitMixedQuadratic(d: MixedNetworkData, o: MixedFitOptions = {}): MixedQuadraticFit {
  if (d.n <= FIXED) throw new Error(`mixed quadratic: ${d.n} plots for ${FIXED} fixed effects`);
  if (d.distinctRates < 3) throw new Error(`mixed quadratic: ${d.distinctRates} distinct rates; a curvature needs at least 3`);
  const k = parameterCount(d);
  const f = (th: Float64Array) => remlDeviance(d, th, o.sums);
  const startAt = (diag: number) => {
    const s = new Float64Array(k);
    s[0] = diag;
    s[2] = diag;
    s[5] = diag;
    for (let j = 6; j < k; j++) s[j] = diag;
    return s;
  };
  const runs = [1, 0.3].map((v) => nelderMeadRestarted(f, startAt(v), { step: 0.3, maxEvaluations: o.maxEvaluations ?? 40000 }));
  const best = runs.reduce((a, b) => (b.value < a.value ? b : a));
  const values = runs.map((r) => r.value);
  const theta = best.x;
  const sol = remlSolution(d, theta, o.sums);
  const s2 = sol.sigma2;
  const c = d.rateScale;
  const back = [1, 1 / c, 1 / (c * c)];
  const l = choleskyFactor(theta);
  const gScaled = (i: number, j: number) => s2 * (l[i * 3] * l[j * 3] + l[i * 3 + 1] * l[j * 3 + 1] + l[i * 3 + 2] * l[j * 3 + 2]);
  const sq = [0, 1, 2];
  const devs = trialDeviations(d, theta, sol.beta);
  return {
    fixed: [sol.beta[0] * back[0], sol.beta[1] * back[1], sol.beta[2] * back[2]],
    fixedCovariance: sq.map((i) => sq.map((j) => s2 * sol.unscaledCovariance.data[i * 3 + j] * back[i] * back[j])),
    randomCovariance: sq.map((i) => sq.map((j) => gScaled(i, j) * back[i] * back[j])),
    groupingVariances: d.grouping.map((_, j) => s2 * theta[6 + j] * theta[6 + j]),
    residualVariance: s2,
    logLik: -sol.deviance / 2,
    deviations: devs.map((u) => [u[0] * back[0], u[1] * back[1], u[2] * back[2]]),
    converged: runs.every((r) => r.converged) && Math.max(...values) - Math.min(...values) < 1e-6,
    evaluations: runs.reduce((s, r) => s + r.evaluations, 0),
    starts: runs.length,
    startSpread: Math.max(...values) - Math.min(...values),
    singular: [0, 2, 5, ...d.grouping.map((_, j) => 6 + j)].some((i) => Math.abs(theta[i]) < SINGULAR_THETA),
    theta,
  };
}
