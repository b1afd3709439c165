// Plot-level residual diagnostics: standardised and externally studentised residuals,
// leverage, Cook's distance, and normal scores for a QQ plot. The formulas are the textbook
// ones (e.g. Cook & Weisberg 1982, Residuals and Influence in Regression), as in R's
// rstandard, rstudent, hatvalues and cooks.distance.
import { normalQuantile } from '../stats/distributions.js';
import type { LinearFit } from './linearFit.js';
import { leverages } from './linearFit.js';

export interface ResidualDiagnostics {
  readonly leverage: Float64Array;
  readonly standardized: Float64Array;
  readonly studentized: Float64Array;
  readonly cooks: Float64Array;
  readonly normalScores: Float64Array;
}

/** A plot whose leverage is 1 (its own treatment-block cell) has no defined residual scale. */
const LEVERAGE_ONE = 1 - 1e-10;

export function residualDiagnostics(fit: LinearFit): ResidualDiagnostics {
  const n = fit.residuals.length;
  const rank = fit.qr.rank;
  const h = leverages(fit);
  const s = Math.sqrt(fit.sigma2);
  const standardized = new Float64Array(n).fill(NaN);
  const studentized = new Float64Array(n).fill(NaN);
  const cooks = new Float64Array(n).fill(NaN);
  const dfe = fit.residualDf;
  for (let i = 0; i < n; i++) {
    if (h[i] > LEVERAGE_ONE || !(dfe > 0)) continue;
    const r = fit.residuals[i] / (s * Math.sqrt(1 - h[i]));
    standardized[i] = r;
    if (dfe > 1) studentized[i] = r * Math.sqrt((dfe - 1) / Math.max(dfe - r * r, 0));
    cooks[i] = (r * r * h[i]) / (rank * (1 - h[i]));
  }
  return { leverage: h, standardized, studentized, cooks, normalScores: normalScores(standardized) };
}

/**
 * Normal scores Phi^-1((i - a) / (m + 1 - 2a)), a = 3/8 for m <= 10 and 1/2 otherwise (R's
 * ppoints), by rank of the defined values; ties broken by position. NaN stays NaN.
 */
export function normalScores(x: ArrayLike<number>): Float64Array {
  const idx: number[] = [];
  for (let i = 0; i < x.length; i++) if (!Number.isNaN(x[i])) idx.push(i);
  idx.sort((a, b) => x[a] - x[b] || a - b);
  const scores = scoresFor(idx.length);
  const out = new Float64Array(x.length).fill(NaN);
  idx.forEach((i, rank) => (out[i] = scores[rank]));
  return out;
}

/** The m normal scores depend on m alone: thousands of trials of one size share one set. */
const scoresBySize = new Map<number, Float64Array>();

function scoresFor(m: number): Float64Array {
  let scores = scoresBySize.get(m);
  if (!scores) {
    const a = m <= 10 ? 3 / 8 : 0.5;
    scores = Float64Array.from({ length: m }, (_, rank) => normalQuantile((rank + 1 - a) / (m + 1 - 2 * a)));
    if (scoresBySize.size >= 256) scoresBySize.clear();
    scoresBySize.set(m, scores);
  }
  return scores;
}
