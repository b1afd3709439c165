// The confidence distribution of tau² keeps the critical values of Q at its grid's nodes per df,
// so pools of the same number of trials share them. A table built after another of the same df
// (the values already kept) must equal, bit for bit, the table a fresh engine builds.
import { describe, expect, it, vi } from 'vitest';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';

const MODULE = '../../../src/engine/pooling/tau2ConfidenceDistribution.js';

function simulated(seed: number, k: number, tau: number): { y: number[]; v: number[] } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const v = Array.from({ length: k }, () => (0.2 + 0.6 * u()) ** 2);
  return { y: v.map((vi) => 1 + tau * z() + Math.sqrt(vi) * z()), v };
}

/** The table read at many normal scores: between nodes, at nodes, in the tails. */
const scores = Array.from({ length: 401 }, (_, i) => -6 + (12 * i) / 400);

async function freshTable(y: number[], v: number[]): Promise<number[]> {
  vi.resetModules();
  const { tau2ConfidenceDistribution } = await import(MODULE);
  const cd = tau2ConfidenceDistribution(y, v);
  return scores.flatMap((z) => {
    const d = cd.at(z);
    return [d.tau2, d.mean, d.hkVariance, d.sumW];
  });
}

describe('critical values kept per df', () => {
  it.each([
    [8, 0.4],
    [60, 0.2],
    [1500, 0.3], // above 1,000 df the chi-square goes through the large-df routine
  ])('k = %i: a table built after another of the same k equals a fresh one exactly', async (k, tau) => {
    const first = simulated(7 + k, k, tau);
    const second = simulated(900 + k, k, 2 * tau);
    const cold = await freshTable(second.y, second.v);
    vi.resetModules();
    const { tau2ConfidenceDistribution } = await import(MODULE);
    tau2ConfidenceDistribution(first.y, first.v); // fills the values for df = k - 1
    const cd = tau2ConfidenceDistribution(second.y, second.v);
    const warm = scores.flatMap((z) => {
      const d = cd.at(z);
      return [d.tau2, d.mean, d.hkVariance, d.sumW];
    });
    expect(warm.some((x) => x > 0)).toBe(true);
    expect(warm).toEqual(cold);
  });
});
