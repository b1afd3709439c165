// The rounding rule of the text summary (common practice for reporting, no single source):
// decimals from the SE, two significant digits of it when it starts with 1 or 2, else one.
import { describe, expect, it } from 'vitest';
import { decimalsFromSe, effectCell, fixed, pPhrase } from '../../../src/report/text/numbers.js';

describe('text numbers', () => {
  it('takes the decimals from the SE', () => {
    expect(decimalsFromSe(0.0445)).toBe(2);
    expect(decimalsFromSe(0.0271)).toBe(3);
    expect(decimalsFromSe(0.000276)).toBe(5);
    expect(decimalsFromSe(3.2)).toBe(0);
    expect(decimalsFromSe(1.4)).toBe(1);
    expect(decimalsFromSe(null)).toBe(3);
  });
  it('puts the effect, its interval and the unit in one cell', () => {
    expect(effectCell(1.3749, 1.2871, 1.4627, 't/ha', 0.0445)).toBe('1.37 (1.29 to 1.46) t/ha');
    expect(effectCell(0.009485, 0.00894, 0.01003, 't/ha per kg/ha', 0.000276)).toBe('0.00949 (0.00894 to 0.01003) t/ha per kg/ha');
    expect(effectCell(null, null, null, 't/ha', null)).toBe('-');
  });
  it('writes no negative zero and p in words', () => {
    expect(fixed(-0.0004, 2)).toBe('0.00');
    expect(pPhrase(0.00001)).toBe('p < 0.0001');
    expect(pPhrase(0.0321)).toBe('p = 0.032');
  });
});
