// Least squares of y on the trial's offsets (intercept + blocks) plus curve columns, by the
// shared Householder QR. Every curve fit — closed-form or profiled — goes through here.
import { zeros, type Matrix } from '../linalg/matrix.js';
import { qrFactor, qrCoefficients } from '../linalg/qr.js';
import type { TrialRateData } from './rateData.js';
import { SameMatrixMemo } from './sameMatrixMemo.js';

const factors = new SameMatrixMemo<ReturnType<typeof qrFactor>>();

export interface LinearFit {
  /** Offsets first (intercept, block columns), then the curve columns; aliased = NaN. */
  readonly coef: Float64Array;
  readonly residuals: Float64Array;
  readonly rss: number;
  readonly rank: number;
  /** Index in coef of the first curve column. */
  readonly curveStart: number;
}

export function fitWithOffsets(d: TrialRateData, curveCols: readonly Float64Array[]): LinearFit {
  const n = d.y.length;
  const q = d.offsetCols;
  const p = q + curveCols.length;
  const x = zeros(n, p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < q; j++) x.data[i * p + j] = d.offsets[i * q + j];
    for (let j = 0; j < curveCols.length; j++) x.data[i * p + q + j] = curveCols[j][i];
  }
  const f = factors.get(x, qrFactor);
  const coef = qrCoefficients(f, d.y);
  const residuals = new Float64Array(n);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    let fit = 0;
    for (let j = 0; j < p; j++) {
      const b = coef[j];
      if (!Number.isNaN(b)) fit += x.data[i * p + j] * b;
    }
    const r = d.y[i] - fit;
    residuals[i] = r;
    rss += r * r;
  }
  return { coef, residuals, rss, rank: f.rank, curveStart: q };
}

/** The design [offset columns that were not aliased, curve columns] as a matrix. */
export function designMatrix(d: TrialRateData, fit: LinearFit, curveCols: readonly Float64Array[]): Matrix {
  const q = d.offsetCols;
  const kept: number[] = [];
  for (let j = 0; j < q; j++) if (!Number.isNaN(fit.coef[j])) kept.push(j);
  const n = d.y.length;
  const p = kept.length + curveCols.length;
  const x = zeros(n, p);
  for (let i = 0; i < n; i++) {
    kept.forEach((j, k) => (x.data[i * p + k] = d.offsets[i * q + j]));
    curveCols.forEach((c, k) => (x.data[i * p + kept.length + k] = c[i]));
  }
  return x;
}
