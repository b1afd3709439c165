// Small and awkward inputs: one and two trials, zero heterogeneity, invalid SEs, the HKSJ
// floor, and plain-JSON output. Reference values are textbook quantiles (t table) or the
// definitions themselves, named beside each check.
import { describe, expect, it } from 'vitest';
import { poolEstimates } from '../../../src/engine/pooling/poolEstimates.js';
import { PoolingInputError } from '../../../src/engine/pooling/validateItems.js';
import type { PoolingItem, PoolingOptions } from '../../../src/engine/pooling/types.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';

const opts: PoolingOptions = { tau2: 'reml', interval: 'hksj', confidence: 0.95, threshold: 0 };

describe('one trial', () => {
  it("returns the trial's own estimate and interval (t on its df when given), and null with a reason for what needs k >= 2", () => {
    const r = poolEstimates([{ trial: 'A', estimate: 1.5, se: 0.5, df: 10, year: 2020 }], opts);
    expect(r.estimate).toBe(1.5);
    expect(r.se).toBe(0.5);
    // t(0.975, 10) = 2.228139 (standard t table, e.g. Fisher & Yates Table III), 1e-6.
    expect(Math.abs((r.upper as number) - (1.5 + 2.228139 * 0.5))).toBeLessThan(1e-6);
    expect(r.tau2).toBeNull();
    expect(r.tau2Lower).toBeNull();
    expect(r.I2).toBeNull();
    expect(r.predictionLower).toBeNull();
    expect(r.probPositive).toBeNull();
    expect(r.notes.join(' ')).toMatch(/one trial/i);
    expect(r.sensitivity.leaveOneOut).toEqual([]);
    expect(r.sensitivity.cumulative).toHaveLength(1);
  });

  it('uses the normal quantile without df: 1.959964 (standard normal table), 1e-6', () => {
    const r = poolEstimates([{ trial: 'A', estimate: 0, se: 1 }], { ...opts, interval: 'wald' });
    expect(Math.abs((r.upper as number) - 1.959964)).toBeLessThan(1e-6);
  });
});

describe('two trials', () => {
  const items: PoolingItem[] = [
    { trial: 'A', estimate: 1, se: 0.3 },
    { trial: 'B', estimate: 2.5, se: 0.4 },
  ];
  it('estimates tau² with HKSJ on 1 df; prediction and probabilities null with a reason (k - 2 = 0 df)', () => {
    const r = poolEstimates(items, opts);
    expect(r.tau2).not.toBeNull();
    expect(r.df).toBe(1);
    expect(r.Qdf).toBe(1);
    expect(r.predictionLower).toBeNull();
    expect(r.probAboveThreshold).toBeNull();
    expect(r.notes.join(' ')).toMatch(/at least 3 trials/);
    // Q with fixed-effect weights, by its definition: (1 - 2.5)² / (0.09 + 0.16).
    expect(Math.abs((r.Q as number) - 2.25 / 0.25)).toBeLessThan(1e-12);
    expect(r.sensitivity.leaveOneOut.every((row) => row.tau2 === null)).toBe(true);
  });
});

describe('invalid input', () => {
  it('rejects a zero, negative or missing SE naming the trial', () => {
    for (const se of [0, -1, Number.NaN]) {
      expect(() => poolEstimates([{ trial: 'A', estimate: 1, se: 0.2 }, { trial: 'Bad site 2019', estimate: 1, se }], opts)).toThrow(PoolingInputError);
      expect(() => poolEstimates([{ trial: 'A', estimate: 1, se: 0.2 }, { trial: 'Bad site 2019', estimate: 1, se }], opts)).toThrow(/Bad site 2019/);
    }
  });
  it('rejects an empty list, duplicate trials, a non-finite estimate and a bad confidence level', () => {
    expect(() => poolEstimates([], opts)).toThrow(/no trials/);
    expect(() => poolEstimates([{ trial: 'A', estimate: 1, se: 1 }, { trial: 'A', estimate: 2, se: 1 }], opts)).toThrow(/Duplicate/);
    expect(() => poolEstimates([{ trial: 'A', estimate: Infinity, se: 1 }], opts)).toThrow(/finite/);
    expect(() => poolEstimates([{ trial: 'A', estimate: 1, se: 1 }], { ...opts, confidence: 95 })).toThrow(/Confidence/);
  });
});

describe('zero heterogeneity', () => {
  it('puts REML, ML, PM and DL tau² on the zero boundary, reports it, and truncates the Q-profile interval at zero', () => {
    // Identical estimates: Q = 0 < every chi-square quantile.
    const items = [0.2, 0.3, 0.25, 0.4].map((se, i) => ({ trial: `T${i}`, estimate: 1, se }));
    for (const tau2 of ['reml', 'ml', 'pm', 'dl'] as const) {
      const r = poolEstimates(items, { ...opts, tau2 });
      expect(r.tau2).toBe(0);
      expect(r.tau2AtBoundary).toBe(true);
      expect(r.method.converged).toBe(true);
      expect(r.tau2Lower).toBe(0);
      expect(r.tau2Upper).toBe(0);
      expect(r.method.tau2).toMatch(/zero boundary/);
      expect(r.I2).toBe(0);
    }
  });
});

function randomItems(seed: number, k: number): PoolingItem[] {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  return Array.from({ length: k }, (_, i) => {
    const se = 0.1 + u();
    return { trial: `T${i}`, estimate: 0.5 + 0.3 * z() + se * z(), se, year: 2010 + (i % 5), covariates: { x: u(), g: i % 2 ? 'a' : 'b' } };
  });
}

describe('HKSJ floor', () => {
  it('is never narrower than Wald, and equals plain HKSJ when q >= 1 (100 seeded data sets, k 3 to 12)', () => {
    let floored = 0;
    for (let seed = 1; seed <= 100; seed++) {
      const items = randomItems(seed, 3 + (seed % 10));
      // the mean's interval is under test: the plug-in new-site interval keeps 300 pools quick
      const fast = { ...opts, prediction: 'plug-in-t' as const };
      const wald = poolEstimates(items, { ...fast, interval: 'wald' });
      const plain = poolEstimates(items, fast);
      const floor = poolEstimates(items, { ...fast, hksjFloor: true });
      const width = (r: typeof wald) => (r.upper as number) - (r.lower as number);
      expect(width(floor)).toBeGreaterThanOrEqual(width(wald) * (1 - 1e-12));
      if ((plain.hksjScale as number) >= 1) expect(Math.abs(width(floor) - width(plain))).toBeLessThan(1e-12);
      else floored++;
    }
    expect(floored).toBeGreaterThan(0); // the floor was exercised
  });
});

describe('output', () => {
  it('is plain JSON (no NaN, no typed arrays): a JSON round trip changes nothing', () => {
    const r = poolEstimates(randomItems(7, 9), { ...opts, moderators: ['x', 'g'] });
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
    expect(r.weights.reduce((s, w) => s + w.share, 0)).toBeCloseTo(1, 12);
    expect(r.metaRegression!.subgroups[0].groups.map((g) => g.level)).toEqual(['a', 'b']);
  });

  it('leaves out trials with a missing moderator and says so', () => {
    const items = randomItems(9, 8);
    items[2].covariates = { x: null, g: 'a' };
    const m = poolEstimates(items, { ...opts, moderators: ['x'] }).metaRegression!;
    expect(m.k).toBe(7);
    expect(m.excluded).toEqual(['T2']);
    expect(m.notes.join(' ')).toMatch(/missing moderator/);
  });
});
