// Which optimum is recommended: the pooled curve's when it has one, else the mixed-model
// curve's; the check agrees when its rate lies inside the recommended interval. Pure choice
// logic on hand-made inputs (no numbers are computed here).
import { describe, expect, it } from 'vitest';
import { recommendRate } from '../../../src/engine/rate/recommendation.js';
import type { PooledRateResult } from '../../../src/engine/rate/types.js';
import type { MixedRateResult } from '../../../src/engine/rate/mixed/types.js';

const pooled: PooledRateResult = {
  optimum: 120, optimumLower: 110, optimumUpper: 200, profitableLower: 100, profitableUpper: 140, netReturnAtOptimum: 1, yieldGainAtOptimum: 1.5,
  method: 'bootstrap', flags: [], trialsUsed: 10, range: [0, 200], delta: null, bootstrap: null, money: null,
};

function mixed(optimum: number, converged = true): MixedRateResult {
  return {
    optimum: { optimum, unconstrainedOptimum: optimum, se: 5, lower: optimum - 10, upper: optimum + 10, confidence: 0.95, method: 'delta', flags: [], range: [0, 200], yieldGainAtOptimum: 1, netReturnAtOptimum: 1 },
    convergence: { converged, method: '', evaluations: 1, starts: 1, startSpread: 0, varianceAtZero: false, note: null },
  } as unknown as MixedRateResult; // only the fields the choice reads
}

describe('recommendRate', () => {
  it('recommends the pooled curve, checks with the mixed model and marks an upper end at the tested limit', () => {
    const r = recommendRate(pooled, mixed(125), 0.02);
    expect(r.recommended.source).toBe('pooled-curve');
    expect(r.recommended.upperAtTestedLimit).toBe(true);
    expect(r.recommended.lowerAtTestedLimit).toBe(false);
    expect(r.check?.source).toBe('mixed-model-curve');
    expect(r.check?.agrees).toBe(true);
    expect(r.nearBest).toEqual({ lower: 100, upper: 140, within: 0.02 });
  });
  it('says so when the check falls outside the interval', () => {
    expect(recommendRate(pooled, mixed(105), 0.02).check?.agrees).toBe(false);
  });
  it('falls back to the mixed-model curve when the pooled curve has no optimum', () => {
    const none: PooledRateResult = { ...pooled, optimum: null, optimumLower: null, optimumUpper: null, flags: ['no-curve'] };
    const r = recommendRate(none, mixed(118), 0);
    expect(r.recommended.source).toBe('mixed-model-curve');
    expect(r.reason).toMatch(/no usable optimum/);
  });
  it('has no check without a converged mixed model', () => {
    expect(recommendRate(pooled, mixed(118, false), 0).check).toBeNull();
    expect(recommendRate(pooled, undefined, 0).check).toBeNull();
  });
});
