import { describe, expect, it } from 'vitest';
import { extent, linearScale, niceTicks, symmetricExtent } from '../../../renderer/shape/scales.js';
import { formatNumber, formatP, decimalsFor, plural } from '../../../renderer/shape/format.js';
import { toCsv, fileNameFor } from '../../../renderer/shape/csv.js';
import { visibleRows } from '../../../renderer/shape/virtualWindow.js';

describe('scales', () => {
  it('finds the extent of finite values only', () => {
    expect(extent([3, null, -1, Number.NaN, 7, undefined])).toEqual({ min: -1, max: 7 });
    expect(extent([null])).toBeNull();
  });
  it('maps linearly and puts a zero-width domain in the middle', () => {
    const s = linearScale(0, 10, 100, 200);
    expect(s(5)).toBe(150);
    expect(linearScale(3, 3, 0, 10)(3)).toBe(5);
  });
  it('gives ticks at 1-2-5 steps inside the range', () => {
    expect(niceTicks(0, 10, 5)).toEqual([0, 2, 4, 6, 8, 10]);
    expect(niceTicks(-0.13, 0.41, 5)).toEqual([0, 0.2, 0.4]);
    expect(niceTicks(-0.13, 0.41, 10)).toEqual([-0.1, 0, 0.1, 0.2, 0.3, 0.4]);
    expect(niceTicks(4, 4)).toEqual([4]);
  });
  it('makes a symmetric residual range', () => {
    expect(symmetricExtent([-0.5, 2])).toEqual({ min: -2, max: 2 });
    expect(symmetricExtent([0, 0])).toEqual({ min: -1, max: 1 });
  });
});

describe('format', () => {
  it('formats numbers, missing values and p-values', () => {
    expect(formatNumber(1234.567, 1)).toBe('1,234.6');
    expect(formatNumber(null)).toBe('–');
    expect(formatP(0.00002)).toBe('< 0.001');
    expect(formatP(0.0456)).toBe('0.046');
    expect(decimalsFor(5.3)).toBe(2);
    expect(decimalsFor(5300)).toBe(0);
    expect(decimalsFor(0.05)).toBe(4);
    expect(plural(1, 'trial')).toBe('1 trial');
    expect(plural(1042, 'trial')).toBe('1,042 trials');
    expect(plural(0, 'analysis', 'analyses')).toBe('0 analyses');
  });
});

describe('csv', () => {
  it('quotes fields with commas, quotes and line breaks and leaves missing values empty', () => {
    const csv = toCsv<{ a: string; b: number | null }>(
      [
        { header: 'name', value: (r) => r.a },
        { header: 'value', value: (r) => r.b },
      ],
      [
        { a: 'plain', b: 1.5 },
        { a: 'has, comma "and quote"', b: null },
      ],
    );
    expect(csv).toBe('name,value\r\nplain,1.5\r\n"has, comma ""and quote""",\r\n');
  });
  it('makes file names from titles', () => {
    expect(fileNameFor('Residuals against fitted — ASH 2023', 'svg')).toBe('residuals-against-fitted-ash-2023.svg');
    expect(fileNameFor('!!!', 'csv')).toBe('export.csv');
  });
});

describe('virtual window', () => {
  it('draws only the rows in view plus the overscan and pads the rest', () => {
    const w = visibleRows(1000, 30, 3000, 300, 5);
    expect(w.first).toBe(95);
    expect(w.end).toBe(100 + 11 + 5);
    expect(w.padTop).toBe(95 * 30);
    expect(w.padTop + (w.end - w.first) * 30 + w.padBottom).toBe(1000 * 30);
  });
  it('handles the ends and an empty list', () => {
    expect(visibleRows(0, 30, 0, 300)).toEqual({ first: 0, end: 0, padTop: 0, padBottom: 0 });
    const last = visibleRows(50, 30, 10_000, 300, 3);
    expect(last.end).toBe(50);
    expect(last.padBottom).toBe(0);
    const top = visibleRows(50, 30, 0, 300, 3);
    expect(top.first).toBe(0);
  });
});
