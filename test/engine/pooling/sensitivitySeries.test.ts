// Leave-one-out and cumulative pools of many trials are solved from shared sums
// (src/engine/pooling/interceptSeries.ts). Reference: the plain refit of each pool — poolCore
// on exactly the trials of that row, started from the same tau² — which the R cross-checks of
// this folder tie to metafor. Tolerance 1e-9 relative (1e-12 absolute near zero): both routes
// find the same root of the same score to ~1e-13, so only rounding separates them.
import { describe, expect, it } from 'vitest';
import { poolCore } from '../../../src/engine/pooling/poolCore.js';
import { fitSettings } from '../../../src/engine/pooling/poolEstimates.js';
import { sensitivityAnalyses, SERIES_FROM } from '../../../src/engine/pooling/sensitivity.js';
import type { PoolingItem, PoolingOptions } from '../../../src/engine/pooling/types.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';

function network(seed: number, k: number, tau: number, seRange: [number, number], outlier = 0, scale = 1): PoolingItem[] {
  const uniform = mulberry32(seed);
  const normal = normalSampler(uniform);
  return Array.from({ length: k }, (_, i) => {
    const se = scale * (seRange[0] + (seRange[1] - seRange[0]) * uniform());
    const estimate = scale * (1.5 + tau * normal()) + se * normal() + (i === 7 ? outlier * scale : 0);
    return { trial: `T${String(i).padStart(4, '0')}`, estimate, se, year: 2000 + Math.floor(i / 9) };
  });
}

const close = (a: number | null, b: number | null): boolean => {
  if (a === null || b === null) return a === b;
  return Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b)) + 1e-12 * Math.max(1, Math.abs(b));
};

function refit(items: readonly PoolingItem[], options: PoolingOptions, start?: number) {
  return poolCore(items.map((it) => it.estimate), items.map((it) => it.se * it.se), fitSettings(options), options.threshold, null, start);
}

function check(items: PoolingItem[], options: PoolingOptions): { rows: number } {
  const full = refit(items, options);
  const s = sensitivityAnalyses(items, full, fitSettings(options), options.threshold);
  items.forEach((_, i) => {
    const plain = refit(items.filter((_, j) => j !== i), options, full.tau2 ?? undefined);
    const row = s.leaveOneOut[i];
    for (const key of ['estimate', 'se', 'tau2', 'lower', 'upper'] as const) expect(close(row[key], plain[key]), `leave-one-out ${i} ${key}: ${row[key]} vs ${plain[key]}`).toBe(true);
  });
  let previous: number | undefined;
  s.cumulative.forEach((row, j) => {
    const plain = refit(items.slice(0, j + 1), options, previous);
    previous = plain.tau2 ?? undefined;
    for (const key of ['estimate', 'se', 'tau2', 'lower', 'upper'] as const) expect(close(row[key], plain[key]), `cumulative ${j} ${key}: ${row[key]} vs ${plain[key]}`).toBe(true);
  });
  return { rows: s.leaveOneOut.length + s.cumulative.length };
}

const reml: PoolingOptions = { tau2: 'reml', interval: 'hksj', confidence: 0.95, threshold: 0 };

describe('leave-one-out and cumulative pools from shared sums equal plain refits', () => {
  it('moderate heterogeneity, REML + HKSJ', () => {
    expect(check(network(1, 150, 0.3, [0.1, 0.6]), reml).rows).toBe(300);
  });
  it('no heterogeneity (tau² at or near the zero boundary), REML and ML, Wald', () => {
    check(network(2, 120, 0, [0.2, 0.4]), reml);
    check(network(3, 120, 0, [0.2, 0.4]), { ...reml, tau2: 'ml', interval: 'wald' });
  });
  it('large heterogeneity with an outlier and very unequal SEs, HKSJ with the floor', () => {
    check(network(4, 100, 1.5, [0.01, 2]), { ...reml, hksjFloor: true });
    check(network(5, 90, 0.4, [0.05, 0.5], 6), reml);
  });
  it('tiny variances (a slope per kg: SEs near 1e-4) and a 90% level', () => {
    check(network(6, 200, 0.3, [0.1, 0.6], 0, 1e-4), { ...reml, confidence: 0.9 });
  });
  it('just above and below the size where the shared sums take over', () => {
    check(network(7, SERIES_FROM, 0.3, [0.1, 0.6]), reml);
    check(network(8, SERIES_FROM + 1, 0.3, [0.1, 0.6]), reml);
  });
});
