// Least squares by rank-revealing QR: coefficients (aliased ones NaN), residuals, the
// orthogonal effects Q'y used by the sequential ANOVA, leverages, and a basis of the null
// space of X that decides whether a linear function of the coefficients is estimable.
import type { Matrix } from '../linalg/matrix.js';
import { qrFactor, qrCoefficients, qtMultiply, qMultiply, unscaledCovariance, type QrFactor } from '../linalg/qr.js';

export interface LinearFit {
  readonly qr: QrFactor;
  /** Original column order; aliased columns NaN. */
  readonly coefficients: Float64Array;
  readonly fitted: Float64Array;
  readonly residuals: Float64Array;
  /** Q'y: the first `rank` entries belong to the pivoted columns, the rest to the residual. */
  readonly effects: Float64Array;
  readonly rss: number;
  readonly residualDf: number;
  /** Residual variance estimate (NaN when there are no residual df). */
  readonly sigma2: number;
  /** (X'X)^- with zeros for aliased columns, original order. */
  readonly unscaled: Matrix;
  /** Null-space basis of X, one p-vector per aliased column. */
  readonly nullSpace: readonly Float64Array[];
}

/** Relative tolerance of the estimability test l'N = 0. */
const ESTIMABLE_TOLERANCE = 1e-7;

/** What depends on the design matrix alone: shared by every trial laid out alike. */
export interface DesignFactor {
  readonly qr: QrFactor;
  readonly unscaled: Matrix;
  readonly nullSpace: readonly Float64Array[];
}

export function factorDesign(x: Matrix): DesignFactor {
  const qr = qrFactor(x);
  return { qr, unscaled: unscaledCovariance(qr), nullSpace: nullSpaceBasis(qr) };
}

/** `factor`: the factorisation of x when already known (a trial laid out like one fitted before). */
export function fitLinear(x: Matrix, y: ArrayLike<number>, factor: DesignFactor = factorDesign(x)): LinearFit {
  const qr = factor.qr;
  const coefficients = qrCoefficients(qr, y);
  const effects = qtMultiply(qr, y);
  const n = x.rows;
  const fitted = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < x.cols; j++) if (!Number.isNaN(coefficients[j])) s += x.data[i * x.cols + j] * coefficients[j];
    fitted[i] = s;
  }
  const residuals = new Float64Array(n);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    residuals[i] = y[i] - fitted[i];
    rss += residuals[i] ** 2;
  }
  const residualDf = n - qr.rank;
  return {
    qr,
    coefficients,
    fitted,
    residuals,
    effects,
    rss,
    residualDf,
    sigma2: residualDf > 0 ? rss / residualDf : NaN,
    unscaled: factor.unscaled,
    nullSpace: factor.nullSpace,
  };
}

/** For each aliased column a: N[a] = 1 and the estimable columns solve R11 z = -R12[:, a]. */
function nullSpaceBasis(f: QrFactor): Float64Array[] {
  const { rank, p } = f;
  const r = f.qr.data;
  const out: Float64Array[] = [];
  for (let a = rank; a < p; a++) {
    const z = new Float64Array(rank);
    for (let i = rank - 1; i >= 0; i--) {
      let s = -r[i * p + a];
      for (let j = i + 1; j < rank; j++) s -= r[i * p + j] * z[j];
      z[i] = s / r[i * p + i];
    }
    const v = new Float64Array(p);
    v[f.pivot[a]] = 1;
    for (let i = 0; i < rank; i++) v[f.pivot[i]] = z[i];
    out.push(v);
  }
  return out;
}

/** l'b is estimable when l is orthogonal to the null space of X. */
export function isEstimable(fit: LinearFit, l: ArrayLike<number>): boolean {
  let lNorm = 0;
  for (let i = 0; i < l.length; i++) lNorm += l[i] * l[i];
  lNorm = Math.sqrt(lNorm);
  for (const v of fit.nullSpace) {
    let s = 0;
    let vNorm = 0;
    for (let i = 0; i < l.length; i++) {
      s += l[i] * v[i];
      vNorm += v[i] * v[i];
    }
    if (Math.abs(s) > ESTIMABLE_TOLERANCE * lNorm * Math.sqrt(vNorm)) return false;
  }
  return true;
}

/** l'b using the non-aliased coefficients (valid when l is estimable). */
export function estimate(fit: LinearFit, l: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < l.length; i++) if (l[i] !== 0 && !Number.isNaN(fit.coefficients[i])) s += l[i] * fit.coefficients[i];
  return s;
}

// l' (X'X)^- m depends on the design alone. Vectors kept per layout (adjusted means, their
// differences, contrasts) are the same objects for every trial laid out alike, so their products
// are remembered by (matrix, l, m): computed once, the same numbers.
const crossMemo = new WeakMap<Matrix, WeakMap<object, WeakMap<object, number>>>();

/** unscaledCross for vectors that stay unchanged (the per-layout ones): remembered. */
export function unscaledCrossKept(fit: LinearFit, l: Float64Array, m: Float64Array): number {
  let byL = crossMemo.get(fit.unscaled);
  if (!byL) crossMemo.set(fit.unscaled, (byL = new WeakMap()));
  let byM = byL.get(l);
  if (!byM) byL.set(l, (byM = new WeakMap()));
  let v = byM.get(m);
  if (v === undefined) {
    v = unscaledCross(fit, l, m);
    byM.set(m, v);
  }
  return v;
}

const estimableMemo = new WeakMap<readonly Float64Array[], WeakMap<object, boolean>>();

/** isEstimable for a vector that stays unchanged: remembered per null space. */
export function isEstimableKept(fit: LinearFit, l: Float64Array): boolean {
  let byL = estimableMemo.get(fit.nullSpace);
  if (!byL) estimableMemo.set(fit.nullSpace, (byL = new WeakMap()));
  let v = byL.get(l);
  if (v === undefined) {
    v = isEstimable(fit, l);
    byL.set(l, v);
  }
  return v;
}

/** l' (X'X)^- m, unscaled by sigma². */
export function unscaledCross(fit: LinearFit, l: ArrayLike<number>, m: ArrayLike<number>): number {
  const p = fit.unscaled.cols;
  const u = fit.unscaled.data;
  let s = 0;
  for (let i = 0; i < p; i++) {
    if (l[i] === 0) continue;
    let r = 0;
    for (let j = 0; j < p; j++) r += u[i * p + j] * m[j];
    s += l[i] * r;
  }
  return s;
}

// Leverages depend on the design alone; trials laid out alike share the factorisation, and so these.
const leverageMemo = new WeakMap<QrFactor, Float64Array>();

/** Diagonal of the hat matrix: squared row norms of the first `rank` columns of Q. Read-only (shared). */
export function leverages(fit: LinearFit): Float64Array {
  let h = leverageMemo.get(fit.qr);
  if (!h) {
    h = computeLeverages(fit.qr);
    leverageMemo.set(fit.qr, h);
  }
  return h;
}

function computeLeverages(qr: QrFactor): Float64Array {
  const { n, rank } = qr;
  const h = new Float64Array(n);
  const e = new Float64Array(n);
  for (let k = 0; k < rank; k++) {
    e.fill(0);
    e[k] = 1;
    const q = qMultiply(qr, e);
    for (let i = 0; i < n; i++) h[i] += q[i] * q[i];
  }
  return h;
}
