// Adjusted treatment means — each at the average of the block (or row and column) effects,
// equal weight per level — with standard errors, intervals and their full covariance.
import { tQuantile } from '../stats/distributions.js';
import type { DesignModel } from './modelMatrix.js';
import { adjustedMeanVector } from './modelMatrix.js';
import { estimate, isEstimable, unscaledCrossKept, type LinearFit } from './linearFit.js';

export interface MeanVectors {
  /** Protocol treatment codes in order. */
  readonly codes: readonly string[];
  /** Coefficient vector of each treatment's adjusted mean; null when the treatment has no plots. */
  readonly vectors: readonly (Float64Array | null)[];
  readonly estimable: readonly boolean[];
}

// The mean vectors depend on the layout alone (the model object and its null space are shared by
// trials laid out alike): kept per model, the same objects every time.
const meanMemo = new WeakMap<DesignModel, WeakMap<readonly Float64Array[], MeanVectors>>();

export function meanVectors(model: DesignModel, fit: LinearFit, codes: readonly string[]): MeanVectors {
  let byNull = meanMemo.get(model);
  if (!byNull) meanMemo.set(model, (byNull = new WeakMap()));
  let mv = byNull.get(fit.nullSpace);
  if (!mv || mv.codes.length !== codes.length || mv.codes.some((c, i) => c !== codes[i])) {
    mv = buildMeanVectors(model, fit, codes);
    byNull.set(fit.nullSpace, mv);
  }
  return mv;
}

function buildMeanVectors(model: DesignModel, fit: LinearFit, codes: readonly string[]): MeanVectors {
  const levels = model.terms[model.treatmentTerm].levels;
  const vectors = codes.map((c) => {
    const level = levels.indexOf(c);
    return level < 0 ? null : adjustedMeanVector(model, level);
  });
  return { codes, vectors, estimable: vectors.map((v) => v !== null && isEstimable(fit, v)) };
}

export interface RawMean {
  readonly estimate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
}

/** Estimate, SE and t-interval of each estimable mean (NaN otherwise). */
export function rawMeans(mv: MeanVectors, fit: LinearFit, confidence: number): RawMean[] {
  const tq = fit.residualDf > 0 ? tQuantile(1 - (1 - confidence) / 2, fit.residualDf) : NaN;
  return mv.vectors.map((v, i) => {
    if (!v || !mv.estimable[i]) return { estimate: NaN, se: NaN, lower: NaN, upper: NaN };
    const est = estimate(fit, v);
    const se = Math.sqrt(fit.sigma2 * unscaledCrossKept(fit, v, v));
    return { estimate: est, se, lower: est - tq * se, upper: est + tq * se };
  });
}

/** sigma² L (X'X)^- L' over the estimable means; NaN where either mean is not estimable. */
export function meansCovariance(mv: MeanVectors, fit: LinearFit): number[][] {
  const k = mv.codes.length;
  const cross = unscaledMeansCross(mv, fit);
  const out = Array.from({ length: k }, () => new Array<number>(k).fill(NaN));
  for (let i = 0; i < k; i++)
    for (let j = i; j < k; j++) {
      const c = cross[i * k + j];
      if (Number.isNaN(c)) continue;
      // Computed once per pair so the matrix is exactly symmetric.
      out[i][j] = out[j][i] = fit.sigma2 * c;
    }
  return out;
}

// L (X'X)^- L' depends on the layout alone (the mean vectors and the factor are shared by trials
// laid out alike): kept per pair of them, NaN where a mean is not estimable.
const crossMemo = new WeakMap<MeanVectors, WeakMap<object, Float64Array>>();

function unscaledMeansCross(mv: MeanVectors, fit: LinearFit): Float64Array {
  let byFactor = crossMemo.get(mv);
  if (!byFactor) crossMemo.set(mv, (byFactor = new WeakMap()));
  let cross = byFactor.get(fit.unscaled);
  if (!cross) {
    const k = mv.codes.length;
    cross = new Float64Array(k * k).fill(NaN);
    for (let i = 0; i < k; i++)
      for (let j = i; j < k; j++) {
        const a = mv.vectors[i];
        const b = mv.vectors[j];
        if (!a || !b || !mv.estimable[i] || !mv.estimable[j]) continue;
        cross[i * k + j] = unscaledCrossKept(fit, a, b);
      }
    byFactor.set(fit.unscaled, cross);
  }
  return cross;
}
