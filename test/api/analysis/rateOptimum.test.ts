// The optimum at another price ratio without refitting (`rates.optimum`), checked against the
// engine's own full analysis: its price-sensitivity table holds the pooled optimum, profitable
// range and net return at several multiples of the price ratio, computed inside the fit; the
// handler, given only the trials' reported curves, must give the same numbers (1e-9 relative:
// the same search on curve parameters that went through JSON). Each trial's optimum at the
// analysed ratio must equal the one the trial reports.
import { beforeAll, describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import { unwrap } from '../../../src/api/result.js';
import type { RateResponseResult } from '../../../src/engine/rate/types.js';
import { demoWorkspace } from '../support/demoWorkspace.js';

let rate: RateResponseResult;
const within = 0.02;

beforeAll(async () => {
  const workspace = await demoWorkspace();
  const report = unwrap(
    await api['analysis.run']({
      workspace,
      save: false,
      spec: { trait: 'yield', control: 'CTL', contrasts: [], oneStage: null, twoStage: null, rateResponse: { factor: 'rate', model: 'quadratic', priceRatio: 0.0048, at: { timing: 'early' }, profitableWithin: within, bootstrap: 0 } },
    }),
  );
  if (!report.rateResponse) throw new Error('no rate response in the report');
  rate = JSON.parse(JSON.stringify(report.rateResponse)) as RateResponseResult;
}, 180_000);

function close(a: number | null, b: number | null) {
  expect(a).not.toBeNull();
  expect(b).not.toBeNull();
  expect(Math.abs((a as number) - (b as number))).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b as number)));
}

describe('rates.optimum', () => {
  it('gives the engine sensitivity table at every price multiple', async () => {
    expect(rate.sensitivity.length).toBeGreaterThan(2);
    for (const row of rate.sensitivity) {
      const r = unwrap(await api['rates.optimum']({ trials: rate.trials as never, priceRatio: row.priceRatio, within }));
      close(r.optimum, row.optimum);
      close(r.profitableLower, row.profitableLower);
      close(r.profitableUpper, row.profitableUpper);
      close(r.netReturn, row.netReturnAtOptimum);
      expect([...r.flags].sort()).toEqual([...row.flags].sort());
    }
  });

  it('gives the pooled optimum and each trial its own optimum at the analysed ratio', async () => {
    const r = unwrap(await api['rates.optimum']({ trials: rate.trials as never, priceRatio: rate.priceRatio, within }));
    close(r.optimum, rate.pooled.optimum);
    expect(r.trialsUsed).toBe(rate.pooled.trialsUsed);
    for (const t of r.trialOptima) close(t.optimum, rate.trials.find((x) => x.trial === t.trial)?.optimum ?? null);
    // the drawn curve: net = gain - r × rate at every point, and the optimum is its best point or better
    for (const p of r.curve) expect(p.net).toBeCloseTo(p.gain - rate.priceRatio * p.rate, 12);
    expect(r.netReturn as number).toBeGreaterThanOrEqual(Math.max(...r.curve.map((p) => p.net)) - 1e-12);
  });

  it('moves the optimum down when the input gets dearer', async () => {
    const cheap = unwrap(await api['rates.optimum']({ trials: rate.trials as never, priceRatio: rate.priceRatio / 2 }));
    const dear = unwrap(await api['rates.optimum']({ trials: rate.trials as never, priceRatio: rate.priceRatio * 2 }));
    expect(dear.optimum as number).toBeLessThan(cheap.optimum as number);
  });

  it('refuses a zero price ratio at the boundary', async () => {
    const r = await api['rates.optimum']({ trials: [], priceRatio: 0 });
    expect(r.ok).toBe(false);
  });
});
