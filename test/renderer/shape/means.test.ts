import { describe, expect, it } from 'vitest';
import { meanRows, notEstimable } from '../../../renderer/shape/means.js';

describe('mean rows', () => {
  const means = [
    { treatment: 'CTL', estimable: true, estimate: 4, lower: 3.5, upper: 4.7, se: 0.3, n: 4 },
    { treatment: 'A1', estimable: false, estimate: null, lower: null, upper: null, se: null, n: 0 },
    { treatment: 'A2', estimable: true, estimate: 5, lower: 4.2, upper: 5.8, se: 0.4, n: 4 },
  ];
  it('keeps estimable means with their interval distances and labels', () => {
    const rows = meanRows(means, new Map([['A2', '80 kg N/ha']]), 'CTL');
    expect(rows.map((r) => r.treatment)).toEqual(['CTL', 'A2']);
    expect(rows[0].error[0]).toBeCloseTo(0.5, 12);
    expect(rows[0].error[1]).toBeCloseTo(0.7, 12);
    expect(rows[0].isControl).toBe(true);
    expect(rows[1].label).toBe('80 kg N/ha');
    expect(rows[0].label).toBe('CTL');
  });
  it('names the treatments the trial could not estimate', () => {
    expect(notEstimable(means)).toEqual(['A1']);
  });
});

import { importFraction, progressText } from '../../../renderer/shape/progress.js';

describe('progress words', () => {
  it('names the stage and the percentage, or an ellipsis when the amount is unknown', () => {
    expect(progressText('read', 0.426)).toBe('Reading and checking the file: 42%');
    expect(progressText('store', null)).toBe('Storing in the workspace…');
    expect(progressText('other', 1.2)).toBe('other: 100%');
  });
  it('counts reading as the first half of an import and storing as the second', () => {
    expect(importFraction('read', 1)).toBe(0.5);
    expect(importFraction('store', 0.5)).toBe(0.75);
    expect(importFraction('store', null)).toBeNull();
  });
});
