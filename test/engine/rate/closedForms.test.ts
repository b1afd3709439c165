// Closed-form economic optima against hand derivations (worked below each case), and
// recovery of known curves from noise-free generated trials (block effects present).
// Tolerances: 1e-12 relative for closed forms; 1e-9 relative for noise-free fits.
import { describe, expect, it } from 'vitest';
import { cappedOptimum, curveValue, netReturn, unconstrainedOptimum, type Curve } from '../../../src/engine/rate/curves.js';
import { analyzeRateResponse } from '../../../src/engine/rate/analyzeRateResponse.js';
import type { RateModel } from '../../../src/engine/rate/types.js';
import { relDiff } from '../../support/rscript.js';
import { exponentialCurve, generateRateNetwork, linearPlateauCurve, quadraticCurve, quadraticPlateauCurve, type TrueCurve } from './generateRateNetwork.js';

const r = 0.01;

describe('closed-form optima (hand derivations)', () => {
  it('quadratic: N(x) = b x + c x^2 - r x, N\' = 0 at x = (r - b)/(2c)', () => {
    // b = 0.04, c = -1e-4: x* = (0.01 - 0.04) / (-2e-4) = 150; gain = 6 - 2.25 = 3.75; net = 3.75 - 1.5 = 2.25.
    const q: Curve = { model: 'quadratic', params: { intercept: 5, linear: 0.04, quadratic: -1e-4 } };
    expect(relDiff(unconstrainedOptimum(q, r), 150)).toBeLessThan(1e-12);
    expect(relDiff(netReturn(q, 150, r), 2.25)).toBeLessThan(1e-12);
    // c = -5e-5 puts x* = 0.03 / 1e-4 = 300 beyond a 0..200 range: capped at 200 and flagged.
    const wide: Curve = { model: 'quadratic', params: { intercept: 5, linear: 0.04, quadratic: -5e-5 } };
    expect(relDiff(unconstrainedOptimum(wide, r), 300)).toBeLessThan(1e-12);
    expect(cappedOptimum(wide, r, 0, 200)).toMatchObject({ optimum: 200, flags: ['above-tested-range'] });
    // b = 0.005 < r: x* = (0.01 - 0.005) / (-2e-4) = -25 < 0, so no input pays.
    const flat: Curve = { model: 'quadratic', params: { intercept: 5, linear: 0.005, quadratic: -1e-4 } };
    expect(relDiff(unconstrainedOptimum(flat, r), -25)).toBeLessThan(1e-12);
    expect(cappedOptimum(flat, r, 0, 200)).toMatchObject({ optimum: 0, flags: ['no-input-pays'] });
    // Convex (c > 0): no interior maximum; the better end wins. N(200) = 0.02*200 + 1e-5*40000 - 2 = 2.4 > 0.
    const convex: Curve = { model: 'quadratic', params: { intercept: 5, linear: 0.02, quadratic: 1e-5 } };
    expect(Number.isNaN(unconstrainedOptimum(convex, r))).toBe(true);
    expect(cappedOptimum(convex, r, 0, 200)).toMatchObject({ optimum: 200, flags: ['convex-curve', 'above-tested-range'] });
  });
  it('quadratic-plateau: slope b(1 - x/x0) = r at x = x0 (1 - r/b); join where the slope reaches 0', () => {
    // b = 0.04, x0 = 200 (so c = -b/(2 x0) = -1e-4, the quadratic above): x* = 200 * 0.75 = 150.
    const qp: Curve = { model: 'quadratic-plateau', params: { intercept: 5, linear: 0.04, join: 200 } };
    expect(relDiff(unconstrainedOptimum(qp, r), 150)).toBeLessThan(1e-12);
    // Plateau a + b x0 / 2 = 5 + 4 = 9, reached at the join and held beyond.
    expect(relDiff(curveValue(qp, 200), 9)).toBeLessThan(1e-12);
    expect(relDiff(curveValue(qp, 260), 9)).toBeLessThan(1e-12);
    // Below the join it equals the quadratic 5 + 0.04x - 1e-4x^2: at 100, 5 + 4 - 1 = 8.
    expect(relDiff(curveValue(qp, 100), 8)).toBeLessThan(1e-12);
  });
  it('linear-plateau: net return rises at b - r up to the join, then falls at -r', () => {
    const lp: Curve = { model: 'linear-plateau', params: { intercept: 5, slope: 0.03, join: 120 } };
    expect(unconstrainedOptimum(lp, r)).toBe(120);
    // Net at the join: 0.03 * 120 - 0.01 * 120 = 2.4.
    expect(relDiff(netReturn(lp, 120, r), 2.4)).toBeLessThan(1e-12);
    // Price ratio above the slope: no input pays.
    expect(cappedOptimum(lp, 0.05, 0, 200)).toMatchObject({ optimum: 0, flags: ['no-input-pays'] });
  });
  it('exponential: slope b c exp(-c x) = r at x = log(b c / r) / c', () => {
    // b = 3, c = 0.02: log(0.06 / 0.01) / 0.02 = log(6) * 50 = 1.791759469228055 * 50 = 89.58797346140275.
    const ex: Curve = { model: 'exponential', params: { intercept: 6, rise: 3, curvature: 0.02 } };
    expect(relDiff(unconstrainedOptimum(ex, r), 89.58797346140275)).toBeLessThan(1e-12);
    // Gain there: 3 (1 - 1/6) = 2.5; net = 2.5 - 0.8958797346140275 = 1.6041202653859725.
    expect(relDiff(netReturn(ex, 89.58797346140275, r), 1.6041202653859725)).toBeLessThan(1e-12);
    // b c = 0.006 < r: the optimum formula is negative, so no input pays.
    const weak: Curve = { model: 'exponential', params: { intercept: 6, rise: 0.3, curvature: 0.02 } };
    expect(cappedOptimum(weak, r, 0, 200)).toMatchObject({ optimum: 0, flags: ['no-input-pays'] });
  });
});

describe('noise-free trials recover the generating curve and its optimum', () => {
  const cases: [RateModel, TrueCurve, Record<string, number>, number][] = [
    // Hand optima at r = 0.01: (0.01 - 0.03)/(2 * -8e-5) = 125
    ['quadratic', quadraticCurve(6, 0.03, -8e-5), { intercept: 6, linear: 0.03, quadratic: -8e-5 }, 125],
    // b = 0.025 > r: the join, 110
    ['linear-plateau', linearPlateauCurve(5, 0.025, 110), { intercept: 5, slope: 0.025, join: 110 }, 110],
    // 150 (1 - 0.01/0.04) = 112.5
    ['quadratic-plateau', quadraticPlateauCurve(5, 0.04, 150), { intercept: 5, linear: 0.04, join: 150 }, 112.5],
    // log(3 * 0.012 / 0.01) / 0.012 = log(3.6) / 0.012
    ['exponential', exponentialCurve(6, 3, 0.012), { intercept: 6, rise: 3, curvature: 0.012 }, Math.log(3.6) / 0.012],
  ];
  for (const [model, curve, truth, optimum] of cases) {
    it(`${model}: parameters and optimum within 1e-9 relative`, () => {
      const network = generateRateNetwork({ seed: 5, trials: 2, curves: [curve], sd: 0, lateShift: 0 });
      const res = analyzeRateResponse(network, { factor: 'rate', model, priceRatio: r, profitableWithin: 0, bootstrap: 0, seed: 1, confidence: 0.95 });
      for (const t of res.trials) {
        expect(t.converged).toBe(true);
        for (const [k, v] of Object.entries(truth)) expect(relDiff(t.params[k] as number, v)).toBeLessThan(1e-9);
        expect(relDiff(t.optimum as number, optimum)).toBeLessThan(1e-9);
      }
    });
  }
});
