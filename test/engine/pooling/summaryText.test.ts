// The plain-text summary restates the result's own numbers (it computes nothing new), so
// the check is that each printed figure is the result's figure rounded to 4 significant digits.
import { describe, expect, it } from 'vitest';
import { poolEstimates } from '../../../src/engine/pooling/poolEstimates.js';
import { summarisePooled } from '../../../src/engine/pooling/summaryText.js';
import { bcgLogRiskRatios } from './publishedData.js';

describe('summarisePooled', () => {
  it('prints the mean, interval, tau² with its interval, Q, both I² forms, the prediction interval and meta-regression lines', () => {
    const r = poolEstimates(bcgLogRiskRatios(), { tau2: 'reml', interval: 'hksj', confidence: 0.95, threshold: -0.5, moderators: ['ablat'] });
    const text = summarisePooled(r, 'log relative risk');
    const four = (x: number | null) => String(Number((x as number).toPrecision(4)));
    for (const x of [r.estimate, r.se, r.lower, r.upper, r.tau2, r.tau2Lower, r.tau2Upper, r.Q, r.predictionLower, r.predictionUpper]) expect(text).toContain(four(x));
    expect(text).toContain(`I² from Q ${(100 * (r.I2 as number)).toFixed(1)}%`);
    expect(text).toContain(`I² from tau² ${(100 * (r.I2FromTau2 as number)).toFixed(1)}%`);
    expect(text).toContain(`t on ${r.df} df`);
    expect(text).toMatch(/meta-regression on ablat \(13 trials\)/);
    expect(text).toMatch(/all moderators jointly: F = /);
  });
});
