// A network of 4,000 trials stays readable: the forest plot draws the 45 trials of largest
// weight (the appendix lists all), and the rate chart draws an even sample of at most 200 trial
// curves while the pooled curve averages every trial (checked here against the mean computed
// directly from the curves' formula); one sentence describes every trial's estimate by order
// statistics (each a trial's own value, checked against the sorted estimates).
import { describe, expect, it } from 'vitest';
import type { CompactAnalysisReport } from '../../../src/api/analysis/report.js';
import type { RateResponseResult } from '../../../src/engine/rate/types.js';
import { FOREST_MAX_ROWS, forestRows } from '../../../src/report/html/sections/resultsSection.js';
import { rateChartData } from '../../../src/report/html/sections/rateSection.js';
import { trialSpreadSentence } from '../../../src/report/html/sections/trialSpread.js';

const K = 4000;
const trials = Array.from({ length: K }, (_, i) => ({
  trial: `S${i}-2024`,
  site: `S${i}`,
  year: 2024,
  design: 'randomised-blocks',
  contrasts: [{ name: 'c', estimable: true, estimate: Math.sin(i), se: 0.2, df: 12, p: 0.1, lower: Math.sin(i) - 0.4, upper: Math.sin(i) + 0.4 }],
}));
const share = trials.map((_, i) => (i + 1) / ((K * (K + 1)) / 2));
// Only the fields these functions read.
const analysis = { settings: { threshold: 0.5 }, twoStage: { trials, pooled: [{ name: 'c', weights: { trial: trials.map((t) => t.trial), weight: share, share } }] } } as unknown as CompactAnalysisReport;

describe('a 4,000-trial network', () => {
  it('draws the heaviest-weighted trials in the forest plot and counts them all', () => {
    const { rows, total } = forestRows(analysis, 0);
    expect(total).toBe(K);
    expect(rows).toHaveLength(FOREST_MAX_ROWS);
    const minShown = Math.min(...rows.map((r) => r.weightShare));
    expect(minShown).toBeCloseTo(share[K - FOREST_MAX_ROWS], 15);
  });

  it('samples the trial curves but pools every trial (1e-12)', () => {
    const rr = {
      priceRatio: 0.005,
      rateUnit: 'kg/ha',
      yieldUnit: 't/ha',
      trials: trials.map((t, i) => ({ trial: t.trial, model: 'quadratic', converged: true, params: { intercept: 5, linear: 0.02 + i * 1e-6, quadratic: -0.00006 }, testedRange: [0, 160] })),
      pooled: { range: [0, 160] },
      recommendation: { recommended: { rate: 120, lower: 110, upper: 130 }, nearBest: { lower: 100, upper: 140, within: 0.02 } },
    } as unknown as RateResponseResult;
    const d = rateChartData(rr, 680);
    expect(d.trials.length).toBeLessThanOrEqual(200);
    const x = 80;
    const meanLinear = 0.02 + ((K - 1) / 2) * 1e-6;
    const last = d.pooled!.points.find((p) => p.rate === x)!;
    expect(last.value).toBeCloseTo(meanLinear * x - 0.00006 * x * x, 12);
    expect(d.netReturn.find((p) => p.rate === x)!.value).toBeCloseTo(last.value - 0.005 * x, 12);
  });

  it('describes every trial estimate in one sentence: extremes, quartiles, median, counts (order statistics, 1e-9)', () => {
    const html = trialSpreadSentence(analysis, 0, 3);
    const sorted = trials.map((t, i) => ({ v: t.contrasts[0].estimate, i })).sort((x, y) => x.v - y.v);
    const keys = [...html.matchAll(/data-key="twoStage\.trials\.(\d+)\.contrasts\.0\.estimate"[^>]*>([^<]+)</g)].map((m) => ({ i: Number(m[1]), text: m[2] }));
    const pick = (q: number) => sorted[Math.floor(q * (K - 1))];
    expect(keys.map((k) => k.i)).toEqual([sorted[0].i, sorted[K - 1].i, pick(0.25).i, pick(0.75).i, pick(0.5).i]);
    for (const k of keys) expect(Math.abs(Number(k.text) - Math.sin(k.i))).toBeLessThanOrEqual(0.0005 + 1e-9);
    const positive = trials.filter((_, i) => Math.sin(i) > 0).length;
    const above = trials.filter((_, i) => Math.sin(i) > 0.5).length;
    expect(html).toContain(`positive in ${positive.toLocaleString('en-GB')} of 4,000 (${Math.round((100 * positive) / K)}%) trials and above the break-even 0.5 in ${above.toLocaleString('en-GB')} of 4,000 (${Math.round((100 * above) / K)}%).`);
  });
});
