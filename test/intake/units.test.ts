import { describe, expect, it } from 'vitest';
import { BUSHEL_WEIGHTS, conversionFactor, HA_PER_ACRE, KG_PER_LB, toCanonical, UNIT_TABLE, UnitError } from '../../src/intake/units.js';

// Published per-crop factors for converting yields per acre to kg/ha, as printed in common
// agronomic conversion tables (e.g. the multiply-by factors in US land-grant university
// extension conversion sheets: 1 bu/ac wheat or soybean = 67.25 kg/ha, maize 62.77 kg/ha,
// barley 53.80 kg/ha, oats 35.87 kg/ha; 1 lb/ac = 1.121 kg/ha). Values recalled from memory.
// Tolerance: half a unit in the last printed digit (0.005 for two decimals, 0.0005 for three),
// the most a correctly rounded printed value can differ from the exact one.
const PUBLISHED: readonly [unit: string, crop: string | undefined, kgPerHa: number, halfDigit: number][] = [
  ['bu/ac', 'wheat', 67.25, 0.005],
  ['bu/ac', 'soybean', 67.25, 0.005],
  ['bu/ac', 'maize', 62.77, 0.005],
  ['bu/ac', 'corn', 62.77, 0.005],
  ['bu/ac', 'sorghum', 62.77, 0.005],
  ['bu/ac', 'barley', 53.8, 0.005],
  ['bu/ac', 'oats', 35.87, 0.005],
  ['lb/ac', undefined, 1.121, 0.0005],
];

describe('unit table', () => {
  it('matches published per-crop bushel and pound factors', () => {
    for (const [unit, crop, kgPerHa, tol] of PUBLISHED) {
      const c = toCanonical(unit, crop);
      const perKgHa = c.to === 't/ha' ? c.factor * 1000 : c.factor;
      expect(Math.abs(perKgHa - kgPerHa), `${unit} ${crop ?? ''}`).toBeLessThanOrEqual(tol);
    }
  });

  it('uses the exact definitions of the pound and the international acre', () => {
    expect(KG_PER_LB).toBe(0.45359237);
    expect(HA_PER_ACRE).toBe(0.40468564224);
    // 43 560 square feet of 0.3048 m, in hectares: exact up to floating-point rounding (1e-15 relative).
    expect(Math.abs((43560 * 0.3048 * 0.3048) / 10000 - HA_PER_ACRE) / HA_PER_ACRE).toBeLessThan(1e-15);
  });

  it('names a source for every entry and every bushel weight', () => {
    for (const u of UNIT_TABLE) expect(u.source.length, u.unit).toBeGreaterThan(5);
    for (const b of BUSHEL_WEIGHTS) expect(b.source, b.crop).toContain('USDA');
  });

  it('converts g/kg and % both ways, t/ha and kg/ha, and leaves as-is alone', () => {
    expect(conversionFactor('g/kg', '%')).toBeCloseTo(0.1, 15);
    expect(conversionFactor('%', 'g/kg')).toBeCloseTo(10, 13);
    expect(conversionFactor('t/ha', 'kg/ha')).toBe(1000);
    expect(conversionFactor('kg/ha', 't/ha')).toBe(0.001);
    expect(conversionFactor('as-is', 'as-is')).toBe(1);
    expect(toCanonical('as-is')).toEqual({ from: 'as-is', to: 'as-is', factor: 1 });
    expect(toCanonical('kg ha-1')).toEqual({ from: 'kg/ha', to: 'kg/ha', factor: 1 });
    // 1 bu/ac maize = 62.77 kg/ha; in lb/ac that is 56 lb/ac exactly (up to rounding, 1e-12 relative).
    expect(conversionFactor('bu/ac', 'lb/ac', 'maize') / 56 - 1).toBeCloseTo(0, 12);
  });

  it('refuses unknown units, bushels without a crop, and mixed kinds of quantity', () => {
    expect(() => toCanonical('furlongs')).toThrow(UnitError);
    expect(() => toCanonical('bu/ac')).toThrow(/needs the crop/);
    expect(() => toCanonical('bu/ac', 'quinoa')).toThrow(/no standard bushel weight/);
    expect(() => conversionFactor('%', 'kg/ha')).toThrow(/different kinds/);
  });
});
