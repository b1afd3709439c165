// The contrast builder's checks as pure functions, on the demo protocol's shape (control CTL,
// rate 0/40/80/160 kg/ha, timing early/late). The rules are common practice for contrasts
// (coefficients summing to zero, a non-zero divisor, levels that exist, polynomial trends only
// on a numeric factor with more levels than the degree).
import { describe, expect, it } from 'vitest';
import { checkContrast, describeContrast, factorLevels, type ProtocolShape } from '../../../renderer/shape/contrastCheck.js';

const protocol: ProtocolShape = {
  control: 'CTL',
  factors: [
    { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
    { name: 'timing', kind: 'categorical', unit: null },
  ],
  treatments: [
    { code: 'CTL', levels: { rate: 0, timing: null } },
    { code: 'A1', levels: { rate: 40, timing: 'early' } },
    { code: 'A2', levels: { rate: 80, timing: 'early' } },
    { code: 'A4', levels: { rate: 160, timing: 'early' } },
    { code: 'B1', levels: { rate: 40, timing: 'late' } },
    { code: 'B2', levels: { rate: 80, timing: 'late' } },
    { code: 'B4', levels: { rate: 160, timing: 'late' } },
  ],
};

const treated = { A1: 1, A2: 1, A4: 1, B1: 1, B2: 1, B4: 1 };

describe('coefficient contrasts', () => {
  it('accepts coefficients that sum to zero with a divisor', () => {
    expect(checkContrast({ kind: 'coefficients', name: 'tvc', coefficients: { CTL: -6, ...treated }, divisor: 6 }, protocol)).toEqual([]);
  });

  it('refuses a sum other than zero and says what it is', () => {
    const p = checkContrast({ kind: 'coefficients', name: 'tvc', coefficients: { CTL: -5, ...treated }, divisor: 6 }, protocol);
    expect(p).toHaveLength(1);
    expect(p[0]).toMatch(/sum to zero; they sum to 1\b/);
  });

  it('accepts fractional coefficients whose sum is zero up to rounding', () => {
    expect(checkContrast({ kind: 'coefficients', name: 'thirds', coefficients: { A1: 0.1, A2: 0.2, A4: -0.3 }, divisor: 1 }, protocol)).toEqual([]);
  });

  it('refuses a zero or missing divisor', () => {
    expect(checkContrast({ kind: 'coefficients', name: 'x', coefficients: { CTL: -1, A1: 1 }, divisor: 0 }, protocol)).toEqual(['The divisor must not be zero.']);
    expect(checkContrast({ kind: 'coefficients', name: 'x', coefficients: { CTL: -1, A1: 1 }, divisor: Number.NaN }, protocol)).toEqual(['The divisor is not a number.']);
  });

  it('refuses a treatment the protocol does not have, naming it and the known ones', () => {
    const p = checkContrast({ kind: 'coefficients', name: 'x', coefficients: { CTL: -1, Z9: 1 }, divisor: 1 }, protocol);
    expect(p).toEqual([expect.stringMatching(/"Z9" is not in the protocol \(known: CTL, A1, A2, A4, B1, B2, B4\)/)]);
  });

  it('refuses all-zero coefficients, a blank name and a repeated name', () => {
    expect(checkContrast({ kind: 'coefficients', name: 'x', coefficients: { CTL: 0, A1: 0 }, divisor: 1 }, protocol)).toEqual(['Every coefficient is zero: the contrast compares nothing.']);
    expect(checkContrast({ kind: 'treated-vs-control', name: '  ' }, protocol)).toEqual(['Give the contrast a name.']);
    expect(checkContrast({ kind: 'treated-vs-control', name: 'tvc' }, protocol, ['tvc'])).toEqual(['Another contrast is already called "tvc".']);
  });

  it('says what it estimates, with the divisor', () => {
    expect(describeContrast({ kind: 'coefficients', name: 'tvc', coefficients: { CTL: -6, ...treated }, divisor: 6 }, protocol)).toBe('(A1 + A2 + A4 + B1 + B2 + B4) minus (6×CTL), divided by 6: a weighted difference of treatment means.');
  });
});

describe('factor comparisons', () => {
  it('accepts two levels the factor has', () => {
    expect(checkContrast({ kind: 'levels', name: 'evl', factor: 'timing', levels: ['early', 'late'] }, protocol)).toEqual([]);
  });

  it('refuses an unknown level, naming the levels there are', () => {
    expect(checkContrast({ kind: 'levels', name: 'evl', factor: 'timing', levels: ['early', 'mid'] }, protocol)).toEqual(['"mid" is not a level of timing (levels: early, late).']);
  });

  it('refuses the same level twice and an unknown factor', () => {
    expect(checkContrast({ kind: 'levels', name: 'e', factor: 'timing', levels: ['early', 'early'] }, protocol)).toEqual(['Choose two different levels.']);
    expect(checkContrast({ kind: 'levels', name: 'e', factor: 'depth', levels: ['a', 'b'] }, protocol)).toEqual(['Factor "depth" is not in the protocol.']);
  });
});

describe('trends', () => {
  it('refuses a trend on a categorical factor', () => {
    expect(checkContrast({ kind: 'trend', name: 't', factor: 'timing', degree: 1 }, protocol)).toEqual([expect.stringMatching(/numeric factor; timing is categorical/)]);
  });

  it('allows degrees up to the number of distinct rates minus one, on the real spacing', () => {
    expect(factorLevels(protocol, 'rate')).toEqual([0, 40, 80, 160]);
    expect(checkContrast({ kind: 'trend', name: 't', factor: 'rate', degree: 3 }, protocol)).toEqual([]);
    const small: ProtocolShape = { ...protocol, treatments: protocol.treatments.slice(0, 3) };
    expect(checkContrast({ kind: 'trend', name: 't', factor: 'rate', degree: 3 }, small)).toEqual(['A trend of degree 3 needs at least 4 distinct levels of rate; the protocol has 3.']);
    expect(describeContrast({ kind: 'trend', name: 't', factor: 'rate', degree: 2 }, protocol)).toMatch(/Quadratic trend over rate on its real spacing \(0, 40, 80, 160 kg\/ha\)/);
  });
});
