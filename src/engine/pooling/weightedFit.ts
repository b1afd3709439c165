// Weighted least squares for a given tau²: weights 1 / (v + tau²). Every estimator,
// interval and diagnostic in pooling is built from this one step.
import { Matrix, zeros } from '../linalg/matrix.js';
import { qrFactor, qrCoefficients, unscaledCovariance, aliasedColumns } from '../linalg/qr.js';

export interface WeightedFit {
  readonly tau2: number;
  readonly weights: Float64Array;
  /** Coefficients in the original column order (NaN for aliased columns). */
  readonly beta: Float64Array;
  /** (X'WX)^- with zeros for aliased columns. */
  readonly covariance: Matrix;
  readonly residuals: Float64Array;
  /** sum w r²: the generalised Q at this tau². */
  readonly weightedRss: number;
  /** log det(X'WX) over the estimable columns. */
  readonly logDetXtWX: number;
  readonly rank: number;
  readonly aliased: number[];
}

export function interceptDesign(k: number): Matrix {
  const x = zeros(k, 1);
  x.data.fill(1);
  return x;
}

export function weightedFit(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, tau2: number): WeightedFit {
  const k = x.rows;
  const p = x.cols;
  const weights = new Float64Array(k);
  const xs = zeros(k, p);
  const ys = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    const w = 1 / (v[i] + tau2);
    weights[i] = w;
    const sw = Math.sqrt(w);
    ys[i] = sw * y[i];
    for (let j = 0; j < p; j++) xs.data[i * p + j] = sw * x.data[i * p + j];
  }
  const f = qrFactor(xs);
  const beta = qrCoefficients(f, ys);
  const covariance = unscaledCovariance(f);
  const residuals = new Float64Array(k);
  let weightedRss = 0;
  for (let i = 0; i < k; i++) {
    let fitted = 0;
    for (let j = 0; j < p; j++) if (!Number.isNaN(beta[j])) fitted += x.data[i * p + j] * beta[j];
    residuals[i] = y[i] - fitted;
    weightedRss += weights[i] * residuals[i] * residuals[i];
  }
  let logDetXtWX = 0;
  for (let j = 0; j < f.rank; j++) logDetXtWX += 2 * Math.log(Math.abs(f.qr.data[j * p + j]));
  return { tau2, weights, beta, covariance, residuals, weightedRss, logDetXtWX, rank: f.rank, aliased: aliasedColumns(f) };
}
