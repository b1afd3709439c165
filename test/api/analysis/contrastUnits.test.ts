// Each contrast's unit: the trait's for differences, per rate unit for a linear trend, the
// analysis scale's name under a transform.
import { describe, expect, it } from 'vitest';
import { contrastUnit } from '../../../src/api/analysis/contrastUnits.js';

const network = { unit: 't/ha', factors: [{ name: 'rate', kind: 'numeric' as const, unit: 'kg/ha' }, { name: 'timing', kind: 'categorical' as const }] };

describe('contrastUnit', () => {
  it('trait unit for differences of means, per kg/ha for a linear trend', () => {
    expect(contrastUnit({ name: 'tc', kind: 'treated-vs-control' }, network, 'none')).toBe('t/ha');
    expect(contrastUnit({ name: 'el', factor: 'timing', levels: ['early', 'late'] }, network, 'none')).toBe('t/ha');
    expect(contrastUnit({ name: 'lin', trend: 'rate', degree: 1 }, network, 'none')).toBe('t/ha per kg/ha');
    // a degree-2 orthogonal component is a combination of means: the trait's unit
    expect(contrastUnit({ name: 'quad', trend: 'rate', degree: 2 }, network, 'none')).toBe('t/ha');
  });
  it('the scale under a transform, and words where a unit is missing', () => {
    expect(contrastUnit({ name: 'lin', trend: 'rate', degree: 1 }, network, 'log')).toBe('log ratio per kg/ha');
    expect(contrastUnit({ name: 'tc', kind: 'treated-vs-control' }, { unit: undefined, factors: [] }, 'none')).toBeNull();
    expect(contrastUnit({ name: 'lin', trend: 'rate', degree: 1 }, { unit: undefined, factors: [] }, 'none')).toBe('trait units per unit of rate');
  });
});
