// Spatial check: add linear and quadratic trends along rows and along columns (centred
// polynomials in the row and column positions) to the design model and F-test the extra sum
// of squares, jointly and per direction. A trend the design does not absorb means a
// row-column or spatial model (or blocking along the gradient in future trials) is needed.
import { zeros, type Matrix } from '../linalg/matrix.js';
import type { TrialDesign } from '../types.js';
import { fUpper } from '../stats/distributions.js';
import { fitLinear, type LinearFit } from './linearFit.js';
import type { FTestRecord, SpatialCheck } from './types.js';
import type { UsedPlot } from './usablePlots.js';
import { num } from '../jsonSafe.js';

/** Flag threshold on the joint test. */
export const SPATIAL_ALPHA = 0.01;

export function spatialCheck(design: TrialDesign, plots: readonly UsedPlot[], x: Matrix, y: ArrayLike<number>, base: LinearFit): SpatialCheck {
  if (plots.some((p) => p.row === null || p.col === null))
    return { available: false, reason: 'not available: row and column positions are not recorded for every plot', joint: null, rows: null, cols: null, flagged: false };
  if (design === 'latin-square' || design === 'row-column')
    return { available: false, reason: 'not needed: rows and columns are already fitted as factors, which absorbs any trend along them', joint: null, rows: null, cols: null, flagged: false };
  const rowTrend = trendColumns(plots.map((p) => p.row as number));
  const colTrend = trendColumns(plots.map((p) => p.col as number));
  const joint = extraSumOfSquares(x, [...rowTrend, ...colTrend], y, base);
  const rows = extraSumOfSquares(x, rowTrend, y, base);
  const cols = extraSumOfSquares(x, colTrend, y, base);
  const flagged = joint.available && joint.p !== null && joint.p < SPATIAL_ALPHA;
  return { available: joint.available, reason: joint.reason, joint, rows, cols, flagged };
}

/** Centred linear and quadratic terms in a position (the quadratic centred too). */
function trendColumns(pos: readonly number[]): number[][] {
  const mean = pos.reduce((s, v) => s + v, 0) / pos.length;
  const lin = pos.map((v) => v - mean);
  const sq = lin.map((v) => v * v);
  const sqMean = sq.reduce((s, v) => s + v, 0) / sq.length;
  return [lin, sq.map((v) => v - sqMean)];
}

function extraSumOfSquares(x: Matrix, extra: readonly number[][], y: ArrayLike<number>, base: LinearFit): FTestRecord {
  const n = x.rows;
  const p = x.cols + extra.length;
  const xe = zeros(n, p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < x.cols; j++) xe.data[i * p + j] = x.data[i * x.cols + j];
    extra.forEach((col, k) => (xe.data[i * p + x.cols + k] = col[i]));
  }
  const full = fitLinear(xe, y);
  const df1 = full.qr.rank - base.qr.rank;
  const df2 = full.residualDf;
  if (df1 <= 0) return { available: false, reason: 'not available: the trends are confounded with the design terms (e.g. blocks laid out along rows)', df1, df2, f: null, p: null };
  if (df2 <= 0) return { available: false, reason: 'not available: no error degrees of freedom left after adding the trends', df1, df2, f: null, p: null };
  const f = (Math.max(base.rss - full.rss, 0) / df1) / (full.rss / df2);
  return { available: true, df1, df2, f: num(f), p: num(fUpper(f, df1, df2)) };
}
