// Closed forms of the population optimum (hand-derived figures below) and the wiring of the
// mixed quadratic into analyzeRateResponse and its text summary.
import { describe, expect, it } from 'vitest';
import { analyzeRateResponse, formatRateResponseText } from '../../../../src/engine/rate/index.js';
import { populationOptimum } from '../../../../src/engine/rate/mixed/populationOptimum.js';
import { nelderMead } from '../../../../src/engine/rate/mixed/nelderMead.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import { generateRateNetwork, quadraticCurve, exponentialCurve } from '../generateRateNetwork.js';

const Z975 = 1.959963984540054; // qnorm(0.975)

describe('population optimum: closed form and delta method (hand-derived)', () => {
  // b1 = 0.03, b2 = -0.0001, r = 0.01: x* = (0.01 - 0.03) / (2 * -0.0001) = 100.
  // Gradient: -1/(2 b2) = 5000, -x*/b2 = 1e6. With var b1 = 1e-6, var b2 = 1e-12:
  //   cov 0 -> var = 25 + 1 = 26;  cov -5e-10 -> var = 25 + 2 * 5000 * 1e6 * (-5e-10) + 1 = 21.
  // Net return at 100: 0.03 * 100 - 0.0001 * 100² - 0.01 * 100 = 1; yield gain 2.
  const base = { linear: 0.03, quadratic: -0.0001, varLinear: 1e-6, varQuadratic: 1e-12, covLinearQuadratic: 0 };
  it('interior optimum, its standard error, interval, gain and net return (1e-12 relative)', () => {
    const o = populationOptimum(base, 0.01, 0, 200, 0.95);
    expect(o.optimum as number).toBeCloseTo(100, 10);
    expect(Math.abs((o.se as number) - Math.sqrt(26)) / Math.sqrt(26)).toBeLessThan(1e-12);
    expect(Math.abs((o.lower as number) - (100 - Z975 * Math.sqrt(26)))).toBeLessThan(1e-9);
    expect(Math.abs((o.upper as number) - (100 + Z975 * Math.sqrt(26)))).toBeLessThan(1e-9);
    expect(o.yieldGainAtOptimum as number).toBeCloseTo(2, 12);
    expect(o.netReturnAtOptimum as number).toBeCloseTo(1, 12);
    expect(o.flags).toEqual([]);
    const withCov = populationOptimum({ ...base, covLinearQuadratic: -5e-10 }, 0.01, 0, 200, 0.95);
    expect(Math.abs((withCov.se as number) - Math.sqrt(21)) / Math.sqrt(21)).toBeLessThan(1e-12);
  });
  it('held to the tested range and flagged: r = 0.05 gives x* = -100 -> 0 (no input pays); r = 0.005 gives 125 -> 100', () => {
    const low = populationOptimum(base, 0.05, 0, 200, 0.95);
    expect(low.unconstrainedOptimum as number).toBeCloseTo(-100, 10);
    expect(low.optimum).toBe(0);
    expect(low.flags).toContain('no-input-pays');
    const high = populationOptimum(base, 0.005, 0, 100, 0.95);
    expect(high.unconstrainedOptimum as number).toBeCloseTo(125, 10);
    expect(high.optimum).toBe(100);
    expect(high.flags).toContain('above-tested-range');
  });
  it('convex population curve: no closed-form optimum and no interval', () => {
    const o = populationOptimum({ ...base, quadratic: 0.0001 }, 0.01, 0, 200, 0.95);
    expect(o.unconstrainedOptimum).toBeNull();
    expect(o.se).toBeNull();
    expect(o.lower).toBeNull();
    expect(o.flags).toContain('convex-curve');
  });
});

describe('Nelder–Mead', () => {
  it('finds the minimum of the Rosenbrock function (1, 1) to 1e-6', () => {
    const r = nelderMead((x) => 100 * (x[1] - x[0] ** 2) ** 2 + (1 - x[0]) ** 2, [-1.2, 1], { step: 0.5 });
    expect(r.converged).toBe(true);
    expect(Math.abs(r.x[0] - 1)).toBeLessThan(1e-6);
    expect(Math.abs(r.x[1] - 1)).toBeLessThan(1e-6);
  });
});

function network(trials: number) {
  const z = normalSampler(mulberry32(99));
  const curves = Array.from({ length: trials }, () => quadraticCurve(6 + 0.5 * z(), 0.03 + 0.006 * z(), -0.00008 + 0.00002 * z()));
  return generateRateNetwork({ seed: 5, trials, curves, sd: 0.3 });
}
const opts = { factor: 'rate', priceRatio: 0.006, at: { timing: 'early' }, profitableWithin: 0.05, bootstrap: 0, seed: 1, confidence: 0.95 } as const;

describe('wiring into analyzeRateResponse', () => {
  it("quadratic: mixedModel present, JSON-safe, trial optima = closed form of the trial's coefficients, shown in the text", () => {
    const res = analyzeRateResponse(network(8), { ...opts, model: 'quadratic' });
    const m = res.mixedModel;
    expect(m).toBeTruthy();
    if (!m) return;
    expect(JSON.parse(JSON.stringify(res))).toEqual(res);
    expect(m.trials).toBe(8);
    expect(m.convergence.converged).toBe(true);
    const b = m.fixed.linear as number;
    const c = m.fixed.quadratic as number;
    expect(m.optimum.unconstrainedOptimum as number).toBeCloseTo((0.006 - b) / (2 * c), 8);
    for (const t of m.trialOptima.byTrial) {
      const x = (0.006 - (t.linear as number)) / (2 * (t.quadratic as number));
      if ((t.quadratic as number) < 0 && x > 0 && x < 200) expect(t.optimum as number).toBeCloseTo(x, 8);
    }
    const text = formatRateResponseText(res);
    expect(text).toContain('Mixed-model quadratic');
    expect(text).toContain('population optimum');
  });
  it("'best' also fits it; other curve models do not", () => {
    expect(analyzeRateResponse(network(4), { ...opts, model: 'best' }).mixedModel).toBeTruthy();
    const other = analyzeRateResponse(generateRateNetwork({ seed: 3, trials: 3, curves: [exponentialCurve(6, 2, 0.015)] }), { ...opts, model: 'exponential' });
    expect(other.mixedModel).toBeUndefined();
    expect(formatRateResponseText(other)).not.toContain('Mixed-model');
  });
  it('a failed mixed fit (one trial) becomes null plus a warning, never a crash', () => {
    const res = analyzeRateResponse(network(1), { ...opts, model: 'quadratic' });
    expect(res.mixedModel).toBeNull();
    expect(res.warnings.some((w) => w.startsWith('Mixed-model quadratic could not be fitted'))).toBe(true);
    expect(formatRateResponseText(res)).toContain('Mixed-model quadratic: not fitted');
  });
});
