// The new-site predictive distribution in the engine: its confidence distribution of tau² agrees
// with two things already checked against R (the Q-profile interval for tau² and Cochran's Q
// p-value), the table agrees with exact roots, the draws are fixed by the seed, and the pooled
// result says which method made the interval. Agreement with R on the bootstrap itself is in
// predictiveBootstrapR.test.ts; coverage and calibration in npm run sim:coverage.
import { describe, expect, it } from 'vitest';
import { bootstrapPrediction } from '../../../src/engine/pooling/predictiveDistribution.js';
import { tau2ConfidenceDistribution } from '../../../src/engine/pooling/tau2ConfidenceDistribution.js';
import { qProfileInterval } from '../../../src/engine/pooling/qProfile.js';
import { interceptDesign } from '../../../src/engine/pooling/weightedFit.js';
import { cochranQ } from '../../../src/engine/pooling/heterogeneity.js';
import { poolEstimates } from '../../../src/engine/pooling/poolEstimates.js';
import { normalQuantile } from '../../../src/engine/stats/distributions.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import type { PoolingOptions } from '../../../src/engine/pooling/types.js';

function simulated(seed: number, k: number, tau: number): { y: number[]; v: number[] } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const v = Array.from({ length: k }, () => (0.2 + 0.6 * u()) ** 2);
  return { y: v.map((vi) => 1 + tau * z() + Math.sqrt(vi) * z()), v };
}

const options: PoolingOptions = { tau2: 'reml', interval: 'hksj', confidence: 0.95, threshold: 1.2 };

describe('confidence distribution of tau²', () => {
  it.each([
    [5, 0.6],
    [12, 0.3],
    [40, 0.5],
  ])('k = %i: its 2.5% and 97.5% points are the Q-profile interval (1e-7 relative)', (k, tau) => {
    const { y, v } = simulated(100 + k, k, tau);
    const cd = tau2ConfidenceDistribution(y, v);
    const qp = qProfileInterval(y, v, interceptDesign(k), 0.95, 0.1);
    const hi = cd.exact(normalQuantile(0.975)).tau2;
    const lo = cd.exact(normalQuantile(0.025)).tau2;
    expect(Math.abs(hi - qp.upper!)).toBeLessThanOrEqual(1e-7 * qp.upper!);
    if (qp.lower === 0) expect(lo).toBe(0);
    else expect(Math.abs(lo - qp.lower!)).toBeLessThanOrEqual(1e-7 * qp.lower! + 1e-12);
  });

  it("its mass at zero is Cochran's Q p-value (1e-12)", () => {
    for (const [seed, k, tau] of [[1, 8, 0.1], [2, 30, 0], [3, 6, 0.8]] as const) {
      const { y, v } = simulated(seed, k, tau);
      expect(Math.abs(tau2ConfidenceDistribution(y, v).massAtZero - cochranQ(y, v).Qp!)).toBeLessThanOrEqual(1e-12);
    }
  });

  it('the table matches exact roots within 1e-3 of max(tau², its 97.5% point) at 400 random scores, k = 3 to 4000', () => {
    for (const k of [3, 7, 25, 4000]) {
      const { y, v } = simulated(200 + k, k, 0.4);
      const cd = tau2ConfidenceDistribution(y, v);
      const scale = cd.exact(1.96).tau2;
      const u = mulberry32(k);
      for (let i = 0; i < 400; i++) {
        const z = -5.5 + 11 * u();
        const a = cd.at(z);
        const b = cd.exact(z);
        expect(Math.abs(a.tau2 - b.tau2), `k=${k}, z=${z}`).toBeLessThanOrEqual(1e-3 * Math.max(b.tau2, scale));
        expect(Math.abs(a.mean - b.mean)).toBeLessThanOrEqual(1e-3 * Math.sqrt(b.hkVariance));
        expect(Math.abs(a.hkVariance - b.hkVariance)).toBeLessThanOrEqual(1e-3 * b.hkVariance);
      }
    }
  });

  it('draws with all effects equal sit at tau² = 0 with a zero Hartung–Knapp variance', () => {
    const cd = tau2ConfidenceDistribution([2, 2, 2, 2], [0.1, 0.2, 0.3, 0.4]);
    expect(cd.massAtZero).toBe(1);
    expect(cd.at(3)).toMatchObject({ tau2: 0, mean: 2, hkVariance: 0 });
  });
});

describe('bootstrap predictive distribution', () => {
  const { y, v } = simulated(7, 10, 0.5);

  it('is fixed by its seed and changes with it', () => {
    const a = bootstrapPrediction(y, v, { confidence: 0.95, threshold: 1, seed: 5 });
    const b = bootstrapPrediction(y, v, { confidence: 0.95, threshold: 1, seed: 5 });
    const c = bootstrapPrediction(y, v, { confidence: 0.95, threshold: 1, seed: 6 });
    expect(b).toEqual(a);
    expect(c.lower).not.toBe(a.lower);
  });

  it('is wider than the plug-in t interval at this moderate heterogeneity and holds the mean', () => {
    const r = poolEstimates(y.map((e, i) => ({ trial: `T${i}`, estimate: e, se: Math.sqrt(v[i]) })), options);
    const plug = r.prediction.plugInT;
    expect(r.predictionLower!).toBeLessThan(plug.lower!);
    expect(r.predictionUpper!).toBeGreaterThan(plug.upper!);
    expect(r.predictionLower!).toBeLessThan(r.estimate!);
    expect(r.predictionUpper!).toBeGreaterThan(r.estimate!);
  });

  it('stops when cancelled', () => {
    const controller = new AbortController();
    controller.abort();
    expect(() => bootstrapPrediction(y, v, { confidence: 0.95, threshold: 0, signal: controller.signal })).toThrow();
  });

  it('refuses fewer than 3 trials and too few draws', () => {
    expect(() => bootstrapPrediction([1, 2], [0.1, 0.1], { confidence: 0.95, threshold: 0 })).toThrow(/3 trials/);
    expect(() => bootstrapPrediction(y, v, { confidence: 0.95, threshold: 0, draws: 10 })).toThrow(/draws/);
  });
});

describe('the pooled result says which method made the new-site numbers', () => {
  const items = simulated(9, 12, 0.4).y.map((e, i) => ({ trial: `T${i}`, estimate: e, se: 0.3 }));

  it('bootstrap-tau2 by default: contract keys hold its values, the plug-in t interval is kept beside them', () => {
    const r = poolEstimates(items, options);
    expect(r.prediction.method).toBe('bootstrap-tau2');
    expect(r.prediction.draws).toBe(20000);
    expect(r.predictionLower).toBe(r.prediction.lower);
    expect(r.probAboveThreshold).toBe(r.prediction.probAboveThreshold);
    expect(r.method.prediction).toMatch(/bootstrap-tau2/);
    const plain = poolEstimates(items, { ...options, prediction: 'plug-in-t' });
    expect(r.prediction.plugInT).toEqual(plain.prediction.plugInT);
    expect(plain.predictionLower).toBe(plain.prediction.plugInT.lower);
    expect(plain.prediction.method).toBe('plug-in-t');
    expect(plain.method.prediction).toMatch(/plug-in-t/);
  });

  it('the fixed-effect model and k < 3 fall back to the plug-in t interval and say so', () => {
    const fixed = poolEstimates(items, { ...options, tau2: 'fixed' });
    expect(fixed.prediction.method).toBe('plug-in-t');
    expect(fixed.notes.join(' ')).toMatch(/plug-in t interval with tau² = 0/);
    const two = poolEstimates(items.slice(0, 2), options);
    expect(two.prediction.method).toBe('plug-in-t');
    expect(two.predictionLower).toBeNull();
  });
});

describe('bad prediction options', () => {
  const items = [1, 1.4, 0.7, 1.1].map((e, i) => ({ trial: `T${i}`, estimate: e, se: 0.3 }));
  it('names the option, the value and the rule', () => {
    expect(() => poolEstimates(items, { ...options, predictionDraws: 50 })).toThrow(/predictionDraws 50 must be a whole number of at least 1000/);
    expect(() => poolEstimates(items, { ...options, predictionSeed: -1 })).toThrow(/predictionSeed -1/);
    expect(() => poolEstimates(items, { ...options, prediction: 'guess' as 'plug-in-t' })).toThrow(/"guess" is not known/);
  });
});
