// The screens' linear scale: ends on whole ticks that cover every value, no negative axis for
// values that are all zero or above, and a point maps linearly into the pixel range.
import { describe, expect, it } from 'vitest';
import { linearScale, niceStep } from '../../../renderer/shape/linearScale.js';

describe('linearScale', () => {
  it('covers the values with ticks on 1, 2, 2.5, 5 × 10^k steps', () => {
    const x = linearScale([-0.37, 1.42, null], [0, 100]);
    expect(x.domain[0]).toBeLessThanOrEqual(-0.37);
    expect(x.domain[1]).toBeGreaterThanOrEqual(1.42);
    expect(x.ticks[0]).toBe(x.domain[0]);
    expect(niceStep(7, 6)).toBe(2);
    expect(x(x.domain[0])).toBe(0);
    expect(x(x.domain[1])).toBe(100);
  });

  it('does not go below zero for rates', () => {
    const x = linearScale([0, 40, 160], [0, 100]);
    expect(x.domain[0]).toBe(0);
    expect(x.domain[1]).toBeGreaterThanOrEqual(160);
  });
});
