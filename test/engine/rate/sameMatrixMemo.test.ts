// SameMatrixMemo (src/engine/rate/sameMatrixMemo.ts) hands back the value computed for the matrix
// before only when every entry is the same (Object.is: NaN equals NaN, 0 and -0 differ), and keeps
// its own copy of the entries, so a caller reusing its array cannot fool it. Common practice for
// a one-entry cache; no outside reference needed beyond these exact comparisons.
import { describe, expect, it } from 'vitest';
import { SameMatrixMemo } from '../../../src/engine/rate/sameMatrixMemo.js';
import type { Matrix } from '../../../src/engine/linalg/matrix.js';

const matrix = (rows: number, cols: number, values: number[]): Matrix => ({ rows, cols, data: Float64Array.from(values) });

describe('SameMatrixMemo', () => {
  it('computes once for a run of equal matrices and again when any entry or the shape changes', () => {
    const memo = new SameMatrixMemo<number>();
    let calls = 0;
    const sum = (x: Matrix): number => (calls++, x.data.reduce((s, v) => s + v, 0));
    expect(memo.get(matrix(2, 2, [1, 2, 3, 4]), sum)).toBe(10);
    expect(memo.get(matrix(2, 2, [1, 2, 3, 4]), sum)).toBe(10);
    expect(calls).toBe(1);
    expect(memo.get(matrix(2, 2, [1, 2, 3, 5]), sum)).toBe(11);
    expect(calls).toBe(2);
    expect(memo.get(matrix(1, 4, [1, 2, 3, 5]), sum)).toBe(11);
    expect(calls).toBe(3);
  });

  it('tells 0 from -0 and matches NaN with NaN', () => {
    const memo = new SameMatrixMemo<string>();
    let calls = 0;
    const name = (x: Matrix): string => (calls++, Array.from(x.data, (v) => (Object.is(v, -0) ? '-0' : String(v))).join(' '));
    expect(memo.get(matrix(1, 2, [0, NaN]), name)).toBe('0 NaN');
    expect(memo.get(matrix(1, 2, [0, NaN]), name)).toBe('0 NaN');
    expect(calls).toBe(1);
    expect(memo.get(matrix(1, 2, [-0, NaN]), name)).toBe('-0 NaN');
    expect(calls).toBe(2);
  });

  it('keeps its own copy of the entries', () => {
    const memo = new SameMatrixMemo<number>();
    const x = matrix(1, 2, [1, 2]);
    let calls = 0;
    const first = (m: Matrix): number => (calls++, m.data[0]);
    expect(memo.get(x, first)).toBe(1);
    x.data[0] = 7; // the same array, changed: not the matrix seen before
    expect(memo.get(x, first)).toBe(7);
    expect(calls).toBe(2);
  });
});
