import { describe, expect, it } from 'vitest';
import { fromRows, multiply, transpose, crossprod, toRows } from '../../../src/engine/linalg/matrix.js';
import { qrFactor, qrCoefficients, unscaledCovariance, aliasedColumns, qMultiply, qtMultiply } from '../../../src/engine/linalg/qr.js';
import { cholesky, cholInverse, cholLogDet } from '../../../src/engine/linalg/cholesky.js';

// Tolerances: 1e-12 absolute on small well-conditioned problems (exact arithmetic identities).
describe('QR with limited pivoting', () => {
  const x = fromRows([
    [1, 1, 2, 0.5],
    [1, 2, 4, 0.1],
    [1, 3, 6, 0.7],
    [1, 4, 8, 0.2],
    [1, 5, 10, 0.9],
  ]);
  it('moves the collinear column to the end and reports it as aliased', () => {
    const f = qrFactor(x);
    expect(f.rank).toBe(3);
    expect(aliasedColumns(f)).toEqual([2]);
    expect(f.pivot).toEqual([0, 1, 3, 2]);
  });
  it('reproduces the normal-equation solution on the estimable columns', () => {
    const y = [1.2, 2.3, 2.9, 4.4, 5.1];
    const f = qrFactor(x);
    const b = qrCoefficients(f, y);
    expect(Number.isNaN(b[2])).toBe(true);
    // Normal equations on columns 0,1,3 solved by Cholesky.
    const xs = fromRows(toRows(x).map((r) => [r[0], r[1], r[3]]));
    const l = cholesky(crossprod(xs));
    const inv = cholInverse(l);
    const xty = [0, 0, 0];
    toRows(xs).forEach((r, i) => r.forEach((v, j) => (xty[j] += v * y[i])));
    const direct = toRows(multiply(inv, transpose(fromRows([xty]))))
      .map((r) => r[0]);
    expect(b[0]).toBeCloseTo(direct[0], 12);
    expect(b[1]).toBeCloseTo(direct[1], 12);
    expect(b[3]).toBeCloseTo(direct[2], 12);
    const cov = unscaledCovariance(f);
    expect(cov.data[1 * 4 + 1]).toBeCloseTo(inv.data[1 * 3 + 1], 12);
    expect(cov.data[0 * 4 + 3]).toBeCloseTo(inv.data[0 * 3 + 2], 12);
    expect(cov.data[2 * 4 + 2]).toBe(0);
  });
  it('Q is orthogonal: Q Q\'y = y', () => {
    const f = qrFactor(x);
    const y = [3, -1, 4, 1, -5];
    const back = qMultiply(f, qtMultiply(f, y));
    y.forEach((v, i) => expect(back[i]).toBeCloseTo(v, 12));
  });
  it('log-determinant from Cholesky matches the 2x2 closed form', () => {
    const l = cholesky(fromRows([[4, 2], [2, 3]]));
    expect(cholLogDet(l)).toBeCloseTo(Math.log(8), 14);
  });
});
