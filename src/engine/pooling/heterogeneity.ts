// Heterogeneity summaries of the intercept-only model: Cochran's Q with fixed-effect
// weights, I² and H² from Q, and the tau²-based forms of Higgins & Thompson (2002, Stat
// Med 21:1539-1558) using the "typical" within-trial variance s².
import { chisqUpper } from '../stats/distributions.js';

export interface Heterogeneity {
  Q: number | null;
  Qdf: number | null;
  Qp: number | null;
  I2: number | null;
  H2: number | null;
  typicalVariance: number | null;
}

/** Cochran's Q about the fixed-effect mean, its df (k - 1) and p, I², H² and the typical within-trial variance. */
export function cochranQ(y: ArrayLike<number>, v: ArrayLike<number>): Heterogeneity {
  const k = y.length;
  let sw = 0;
  let swy = 0;
  let sw2 = 0;
  for (let i = 0; i < k; i++) {
    const w = 1 / v[i];
    sw += w;
    sw2 += w * w;
    swy += w * y[i];
  }
  const mean = swy / sw;
  let Q = 0;
  for (let i = 0; i < k; i++) Q += ((y[i] - mean) * (y[i] - mean)) / v[i];
  const df = k - 1;
  if (df < 1) return { Q: 0, Qdf: 0, Qp: null, I2: null, H2: null, typicalVariance: null };
  return {
    Q,
    Qdf: df,
    Qp: chisqUpper(Q, df),
    I2: Q > 0 ? Math.max(0, (Q - df) / Q) : 0,
    H2: Q / df,
    typicalVariance: (df * sw) / (sw * sw - sw2),
  };
}

export function tau2BasedShares(tau2: number | null, typicalVariance: number | null): { I2: number | null; H2: number | null } {
  if (tau2 === null || typicalVariance === null) return { I2: null, H2: null };
  return { I2: tau2 / (tau2 + typicalVariance), H2: (tau2 + typicalVariance) / typicalVariance };
}
