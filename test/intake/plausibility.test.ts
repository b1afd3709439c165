// The import-time plausibility screen. Robust centre and spread: the median and the median
// absolute deviation scaled by 1.4826 (the usual factor that makes it estimate the standard
// deviation of normal data; common practice, no single source). Threshold: 8 such deviations.
import { describe, expect, it } from 'vitest';
import { PLAUSIBLE_ROBUST_Z, screenPlausibility } from '../../src/intake/plausibility.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';

function trialValues(n: number, seed: number): number[] {
  const normal = normalSampler(mulberry32(seed));
  return Array.from({ length: n }, () => 8 + 0.6 * normal());
}

describe('plausibility screen', () => {
  it('lists a decimal slip with its row, column and the power of ten', () => {
    const values = trialValues(28, 5);
    values[9] = Number(values[9].toFixed(2)) * 10;
    const rows = values.map((_, i) => i + 2);
    const w = screenPlausibility([{ trial: 'S1-2024', trait: 'yield', values, rows }], 'f.csv', 'yield', () => 't/ha');
    expect(w).toHaveLength(1);
    expect(w[0]).toMatchObject({ file: 'f.csv', row: 11, column: 'yield', rule: 'implausible-value' });
    expect(w[0].message).toMatch(/about 10 times the median/);
  });

  it('flags a value by hand-computed robust distance: median 10, MAD 1 (scaled 1.4826), value 22.2 is 8.23 deviations away', () => {
    const values = [9, 9, 10, 10, 10, 11, 11, 22.2];
    // median of the 8 values = 10; absolute deviations 1,1,0,0,0,1,1,12.2 -> median 1; spread 1.4826.
    const w = screenPlausibility([{ trial: 'T', trait: 'y', values, rows: values.map((_, i) => i + 2) }], 'f.csv', 'y', () => '');
    expect(w.map((p) => p.row)).toEqual([9]);
    expect((22.2 - 10) / 1.4826).toBeGreaterThan(PLAUSIBLE_ROBUST_Z);
    // Just inside the threshold: not listed.
    const inside = [9, 9, 10, 10, 10, 11, 11, 10 + 7.9 * 1.4826];
    expect(screenPlausibility([{ trial: 'T', trait: 'y', values: inside, rows: inside.map((_, i) => i + 2) }], 'f.csv', 'y', () => '')).toEqual([]);
  });

  it('keeps quiet on clean trials, skips missing values, tiny trials and trials without spread', () => {
    for (let seed = 1; seed <= 50; seed++) {
      const values = trialValues(28, seed);
      expect(screenPlausibility([{ trial: 'T', trait: 'y', values, rows: values.map((_, i) => i + 2) }], 'f.csv', 'y', () => '')).toEqual([]);
    }
    const withMissing = Float64Array.from([8, NaN, 8.2, 7.9, 8.1, 8.3, NaN, 80]);
    expect(screenPlausibility([{ trial: 'T', trait: 'y', values: withMissing, rows: Int32Array.from(withMissing, (_, i) => i + 2) }], 'f.csv', 'y', () => '').map((p) => p.row)).toEqual([9]);
    expect(screenPlausibility([{ trial: 'T', trait: 'y', values: [8, 8.1, 80], rows: [2, 3, 4] }], 'f.csv', 'y', () => '')).toEqual([]);
    expect(screenPlausibility([{ trial: 'T', trait: 'y', values: [0, 0, 0, 0, 0, 0, 5], rows: [2, 3, 4, 5, 6, 7, 8] }], 'f.csv', 'y', () => '')).toEqual([]);
  });
});
