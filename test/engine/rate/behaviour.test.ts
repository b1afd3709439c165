// Behaviour the agronomist relies on: flags at the edges of the tested range, failures
// shown rather than hidden, cautions and units on every result, JSON safety, progress,
// cancellation and clear errors. No numeric reference here beyond hand-checkable facts.
import { describe, expect, it } from 'vitest';
import { analyzeRateResponse, formatRateResponseText } from '../../../src/engine/rate/analyzeRateResponse.js';
import { RateResponseInputError } from '../../../src/engine/rate/errors.js';
import { RATE_CAUTIONS, type RateResponseOptions } from '../../../src/engine/rate/types.js';
import { generateRateNetwork, linearPlateauCurve, quadraticCurve } from './generateRateNetwork.js';

const base: RateResponseOptions = { factor: 'rate', model: 'quadratic', priceRatio: 0.006, profitableWithin: 0.05, bootstrap: 0, seed: 1, confidence: 0.95 };
const network = generateRateNetwork({ seed: 99, trials: 6, curves: [quadraticCurve(6, 0.03, -8e-5), quadraticCurve(5, 0.035, -9e-5)], sd: 0.2 });

describe('rate response behaviour', () => {
  it('carries the cautions, the unit note, and survives JSON unchanged', () => {
    const res = analyzeRateResponse(network, { ...base, bootstrap: 50 });
    expect(res.cautions).toEqual([...RATE_CAUTIONS]);
    expect(res.cautions[0]).toBe('These results summarise the trials in this workspace only. Rates must respect product label limits and local nutrient-management rules, and be confirmed by local agronomic advice.');
    expect(res.unitNote).toMatch(/kg\/ha/);
    expect(res.unitNote).toMatch(/t\/ha/);
    expect(JSON.parse(JSON.stringify(res))).toEqual(res);
    const text = formatRateResponseText(res);
    expect(text).toContain(RATE_CAUTIONS[0]);
    expect(text).toContain('Economic optimum');
    for (const t of res.trials) expect(text).toContain(t.trial);
  });

  it('flags an optimum beyond the highest tested rate and caps it there', () => {
    // Nearly linear response (c tiny) and a cheap input: the unconstrained optimum is far above 200.
    const steep = generateRateNetwork({ seed: 5, trials: 4, curves: [quadraticCurve(5, 0.03, -1e-5)], sd: 0.05 });
    const res = analyzeRateResponse(steep, { ...base, priceRatio: 0.001 });
    expect(res.pooled.optimum).toBe(200);
    expect(res.pooled.flags).toContain('above-tested-range');
    for (const t of res.trials) {
      expect(t.optimum).toBe(200);
      expect(t.flags).toContain('above-tested-range');
      expect(t.unconstrainedOptimum as number).toBeGreaterThan(200);
    }
  });

  it('reports rate 0 when no input pays, at every site', () => {
    const res = analyzeRateResponse(network, { ...base, priceRatio: 0.1 });
    expect(res.pooled.optimum).toBe(0);
    expect(res.pooled.flags).toContain('no-input-pays');
    expect(res.siteOptima.shareNoInputPays).toBe(1);
  });

  it('without a control, an optimum below the lowest tested rate is flagged below-tested-range', () => {
    const noControl = { ...network, control: undefined };
    const res = analyzeRateResponse(noControl, { ...base, priceRatio: 0.05 });
    expect(res.warnings.some((w) => w.includes('No treatment at rate 0'))).toBe(true);
    expect(res.pooled.range).toEqual([40, 200]);
    expect(res.pooled.optimum).toBe(40);
    expect(res.pooled.flags).toEqual(['below-tested-range']);
    for (const t of res.trials) expect(t.flags).toContain('below-tested-range');
  });

  it('pools only over the rates every trial tested, and says so', () => {
    const trials = network.trials.map((t, i) => (i === 0 ? { ...t, plots: t.plots.filter((p) => !p.treatment.endsWith('200')) } : t));
    const res = analyzeRateResponse({ ...network, trials }, base);
    expect(res.trials[0].testedRange).toEqual([0, 160]);
    expect(res.pooled.range).toEqual([0, 160]);
    expect(res.warnings.some((w) => w.includes('different rate ranges') && w.includes('0–160'))).toBe(true);
  });

  it('shows a non-converged plateau fit and leaves that trial out of the pooled results', () => {
    // Trial 1 keeps rising linearly over the whole range: no plateau to find.
    const mixed = generateRateNetwork({ seed: 8, trials: 3, curves: [linearPlateauCurve(5, 0.02, 1000), linearPlateauCurve(5, 0.03, 100), linearPlateauCurve(5, 0.03, 100)], sd: 0.01 });
    const res = analyzeRateResponse(mixed, { ...base, model: 'linear-plateau' });
    const t1 = res.trials[0];
    expect(t1.converged).toBe(false);
    expect(t1.flags).toContain('not-converged');
    expect(t1.optimum).toBeNull();
    expect(t1.convergence.note).toMatch(/no plateau/);
    expect(res.warnings.some((w) => w.includes(t1.trial) && w.includes('did not converge'))).toBe(true);
    expect(res.pooled.trialsUsed).toBe(2);
  });

  it('a plateau reached by the lowest rate leaves the join unidentified: not converged, said so', () => {
    const step = generateRateNetwork({ seed: 12, trials: 1, curves: [linearPlateauCurve(5, 0.1, 20)], sd: 0.01 });
    const res = analyzeRateResponse(step, { ...base, model: 'linear-plateau' });
    expect(res.trials[0].converged).toBe(false);
    expect(res.trials[0].convergence.note).toMatch(/not identified/);
  });

  it("'best' shows the AICc table for every trial and picks its lowest converged row", () => {
    const res = analyzeRateResponse(network, { ...base, model: 'best' });
    for (const t of res.trials) {
      const table = t.aicTable ?? [];
      expect(table.map((r) => r.model)).toEqual(['linear', 'quadratic', 'linear-plateau', 'quadratic-plateau', 'exponential']);
      const best = table.filter((r) => r.converged && r.aicc !== null).sort((a, b) => (a.aicc as number) - (b.aicc as number))[0];
      expect(t.model).toBe(best.model);
      expect(best.deltaAicc).toBe(0);
    }
  });

  it("'best' with too few plots for AICc falls back to the quadratic and says so", () => {
    // One plot per rate in a completely randomised trial: 4 plots, quadratic k = 4, n - k - 1 < 0.
    const tiny = generateRateNetwork({ seed: 3, trials: 1, blocks: 1, rates: [0, 50, 100, 150], curves: [quadraticCurve(6, 0.03, -8e-5)], designs: ['completely-randomised'], sd: 0.2 });
    const res = analyzeRateResponse(tiny, { ...base, model: 'best', at: { timing: 'early' } });
    expect(res.trials[0].model).toBe('quadratic');
    expect(res.trials[0].aicTable?.every((r) => r.aicc === null)).toBe(true);
    expect(res.warnings.some((w) => w.includes('too few plots') && w.includes('quadratic used'))).toBe(true);
  });

  it('reports progress and can be cancelled during the bootstrap', () => {
    const stages: { stage: string; fraction: number }[] = [];
    analyzeRateResponse(network, { ...base, bootstrap: 40 }, { onProgress: (e) => stages.push(e) });
    expect(stages.some((s) => s.stage === 'bootstrap')).toBe(true);
    expect(stages[stages.length - 1]).toEqual({ stage: 'done', fraction: 1 });
    const boot = stages.filter((s) => s.stage === 'bootstrap').map((s) => s.fraction);
    expect(boot[boot.length - 1]).toBe(1);
    for (let i = 1; i < boot.length; i++) expect(boot[i]).toBeGreaterThan(boot[i - 1]);

    const ctl = new AbortController();
    const run = () =>
      analyzeRateResponse(network, { ...base, bootstrap: 1000 }, {
        signal: ctl.signal,
        onProgress: (e) => {
          if (e.stage === 'bootstrap' && e.fraction >= 0.1) ctl.abort();
        },
      });
    expect(run).toThrow(/abort/i);
  });

  it('same seed, same bootstrap interval; money follows the prices', () => {
    const opts = { ...base, bootstrap: 60, seed: 17, prices: { input: 1.2, crop: 200, currency: 'EUR' } };
    const a = analyzeRateResponse(network, opts);
    const b = analyzeRateResponse(network, opts);
    expect(a.pooled.optimumLower).toBe(b.pooled.optimumLower);
    expect(a.pooled.optimumUpper).toBe(b.pooled.optimumUpper);
    expect(a.pooled.money?.netReturnAtOptimum).toBeCloseTo((a.pooled.netReturnAtOptimum as number) * 200, 9);
    expect(a.pooled.money?.inputCostAtOptimum).toBeCloseTo((a.pooled.optimum as number) * 1.2, 9);
  });

  it('rejects bad options with messages that name the problem', () => {
    expect(() => analyzeRateResponse(network, { ...base, factor: 'dose' })).toThrow(/"dose" is not a factor/);
    expect(() => analyzeRateResponse(network, { ...base, factor: 'timing' })).toThrow(/numeric factor/);
    expect(() => analyzeRateResponse(network, { ...base, at: { timing: 'mid' } })).toThrow(/timing = mid/);
    expect(() => analyzeRateResponse(network, { ...base, priceRatio: 0 })).toThrow(RateResponseInputError);
    expect(() => analyzeRateResponse(network, { ...base, prices: { input: 1, crop: 100 } })).toThrow(/disagree/);
  });
});
