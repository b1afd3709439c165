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

// Intercept designs are views of one shared buffer of ones (pools are refitted thousands of
// times by the sensitivity analyses); nothing writes to a design matrix.
let ones = new Float64Array(0);
const interceptDesigns = new WeakSet<Matrix>();

/** The k x 1 design of ones. Read-only: its data is shared with every other intercept design. */
export function interceptDesign(k: number): Matrix {
  if (ones.length < k) ones = new Float64Array(Math.max(k, 2 * ones.length)).fill(1);
  const x: Matrix = { rows: k, cols: 1, data: ones.subarray(0, k) };
  interceptDesigns.add(x);
  return x;
}

export function weightedFit(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, tau2: number): WeightedFit {
  const k = x.rows;
  const p = x.cols;
  if (p === 1 && isInterceptOnly(x)) return interceptFit(y, v, tau2);
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

/** Whether a design is the intercept alone (one column of ones). */
export function isInterceptOnly(x: Matrix): boolean {
  return interceptDesigns.has(x) || (x.cols === 1 && isAllOnes(x.data));
}

function isAllOnes(x: Float64Array): boolean {
  for (let i = 0; i < x.length; i++) if (x[i] !== 1) return false;
  return true;
}

/**
 * The same fit for the intercept-only pool (fitted thousands of times by the leave-one-out
 * and cumulative analyses) in closed form: the weighted mean, its variance 1 / sum w.
 */
function interceptFit(y: ArrayLike<number>, v: ArrayLike<number>, tau2: number): WeightedFit {
  const k = y.length;
  const weights = new Float64Array(k);
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < k; i++) {
    const w = 1 / (v[i] + tau2);
    weights[i] = w;
    sxx += w;
    sxy += w * y[i];
  }
  const b = sxy / sxx;
  const residuals = new Float64Array(k);
  let weightedRss = 0;
  for (let i = 0; i < k; i++) {
    const r = y[i] - b;
    residuals[i] = r;
    weightedRss += weights[i] * r * r;
  }
  const covariance = zeros(1, 1);
  covariance.data[0] = 1 / sxx;
  return { tau2, weights, beta: Float64Array.of(b), covariance, residuals, weightedRss, logDetXtWX: Math.log(sxx), rank: 1, aliased: [] };
}
