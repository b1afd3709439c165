// Finding 7 of issue 18: two optima printed side by side with no word on which is the
// recommendation; "profitable range" not saying it means "net return within profitableWithin
// of the best"; an interval held at the top tested rate not marked. Reproduced on generated
// rate networks (invented data, fixed seeds); the figures asserted come from the result itself.
import { describe, expect, it } from 'vitest';
import { analyzeRateResponse } from '../../../src/engine/rate/analyzeRateResponse.js';
import type { RateResponseOptions } from '../../../src/engine/rate/types.js';
import { recommendationLines } from '../../../src/report/text/rateRecommendationText.js';
import { fixed } from '../../../src/report/text/numbers.js';
import { generateRateNetwork, quadraticCurve } from '../../engine/rate/generateRateNetwork.js';

const base: RateResponseOptions = { factor: 'rate', model: 'quadratic', priceRatio: 0.006, profitableWithin: 0.05, bootstrap: 0, seed: 1, confidence: 0.95 };

describe('the rate recommendation in the text summary (issue 18, finding 7)', () => {
  it('names one recommended rate with the reason, shows the other optimum as a check, and says what the near-best range means', () => {
    const network = generateRateNetwork({ seed: 99, trials: 6, curves: [quadraticCurve(6, 0.03, -8e-5), quadraticCurve(5, 0.035, -9e-5)], sd: 0.2 });
    const res = analyzeRateResponse(network, base);
    expect(res.mixedModel).toBeTruthy();
    const text = recommendationLines(res).join('\n');
    expect(text.match(/^Recommended rate: /gm)).toHaveLength(1);
    expect(text).toContain(`Recommended rate: ${fixed(res.pooled.optimum, 1)} `);
    expect(text).toMatch(/from the pooled curve/);
    expect(text).toMatch(/Why this one: /);
    expect(text.match(/^Check: /gm)).toHaveLength(1);
    expect(text).toContain(`Check: the mixed-model population curve gives ${fixed(res.mixedModel!.optimum.optimum, 1)} `);
    expect(text).toMatch(/agree/);
    expect(text).not.toMatch(/profitable range/);
    expect(text).toContain(`within 0.05 ${res.yieldUnit ?? 'yield units'} of the best: ${fixed(res.pooled.profitableLower, 1)} to ${fixed(res.pooled.profitableUpper, 1)}`);
  });

  it('marks an interval whose upper end is held at the highest tested rate', () => {
    // nearly straight response and a cheap input: the optimum and the bootstrap's upper end sit at 200
    const steep = generateRateNetwork({ seed: 5, trials: 6, curves: [quadraticCurve(5, 0.03, -1e-5)], sd: 0.05 });
    const res = analyzeRateResponse(steep, { ...base, priceRatio: 0.001, bootstrap: 40 });
    expect(res.pooled.range[1]).toBe(200);
    expect(res.pooled.optimumUpper).toBe(200);
    expect(res.recommendation.recommended.upperAtTestedLimit).toBe(true);
    const text = recommendationLines(res).join('\n');
    expect(text).toContain('200.0 [capped at the highest tested rate]');
    expect(text).toMatch(/upper end is capped at the highest rate tested in every trial \(200\.0 .*\): .*may be higher/);
  });

  it('leaves an interval inside the tested rates unmarked', () => {
    const network = generateRateNetwork({ seed: 99, trials: 6, curves: [quadraticCurve(6, 0.03, -8e-5)], sd: 0.2 });
    const res = analyzeRateResponse(network, { ...base, bootstrap: 40 });
    expect(res.pooled.optimumUpper as number).toBeLessThan(200);
    expect(recommendationLines(res).join('\n')).not.toMatch(/capped/);
  });
});
