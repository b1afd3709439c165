// The fit's contract beyond the numbers (no outside reference needed for these properties):
// plain JSON values, the run record, progress events, cancellation, dropped plots and clear
// errors for bad input.
import { describe, expect, it } from 'vitest';
import { fitOneStage, OneStageCancelledError, OneStageDataError } from '../../../src/engine/onestage/fitOneStage.js';
import { simulateNetwork } from './support/simulateNetwork.js';

const options = { random: ['trial', 'block', 'treatment-by-trial'] as ('trial' | 'block' | 'treatment-by-trial')[], residual: 'common' as const, df: 'satterthwaite' as const, confidence: 0.95, profile: false };

describe('fitOneStage contract', () => {
  const sim = simulateNetwork({ seed: 9, trials: 12, missing: 0.05 });

  it('returns plain JSON values and a run record whose criterion path never rises', () => {
    const events: { stage: string; iteration: number; criterion: number }[] = [];
    const fit = fitOneStage(sim.network, [], options, { onProgress: (e) => events.push(e) });
    expect(JSON.parse(JSON.stringify(fit))).toEqual(fit);
    expect(fit.run.outcome).toBe('converged');
    expect(fit.run.criterionPath.at(-1)).toBeCloseTo(fit.minusTwoLogLik, 12);
    for (let i = 1; i < fit.run.criterionPath.length; i++) expect(fit.run.criterionPath[i]).toBeLessThanOrEqual(fit.run.criterionPath[i - 1] + 1e-9);
    expect(Object.keys(fit.run.start)).toEqual(['trial', 'block', 'treatment-by-trial', 'residual']);
    expect(events.some((e) => e.stage === 'one-stage')).toBe(true);
    expect(fit.logLik).toBeCloseTo(-fit.minusTwoLogLik / 2, 12);
    expect(fit.droppedPlots).toBe(sim.network.trials.reduce((s, t) => s + t.plots.filter((p) => p.value === null).length, 0));
    expect(fit.nObservations + fit.droppedPlots).toBe(12 * 28);
  });

  it('stops with OneStageCancelledError when the signal is aborted', () => {
    const controller = new AbortController();
    controller.abort();
    expect(() => fitOneStage(sim.network, [], options, { signal: controller.signal })).toThrow(OneStageCancelledError);
  });

  it('drops excluded plots exactly like missing ones', () => {
    const first = sim.network.trials[0];
    const k = first.plots.findIndex((p) => p.value !== null);
    const excluded = { ...sim.network, trials: [{ ...first, plots: first.plots.map((p, i) => (i === k ? { ...p, excluded: { reason: 'hail' } } : p)) }, ...sim.network.trials.slice(1)] };
    const missing = { ...sim.network, trials: [{ ...first, plots: first.plots.map((p, i) => (i === k ? { ...p, value: null } : p)) }, ...sim.network.trials.slice(1)] };
    const a = fitOneStage(excluded, [], options);
    const b = fitOneStage(missing, [], options);
    expect(a.minusTwoLogLik).toBe(b.minusTwoLogLik);
    expect(a.droppedPlots).toBe(b.droppedPlots);
  });

  it('names the trial and treatment of a plot whose treatment is unknown', () => {
    const first = sim.network.trials[0];
    const bad = { ...sim.network, trials: [{ ...first, plots: [{ ...first.plots[0], treatment: 'ZZ9' }, ...first.plots.slice(1)] }] };
    expect(() => fitOneStage(bad, [], options)).toThrow(OneStageDataError);
    expect(() => fitOneStage(bad, [], options)).toThrow(/E0001.*ZZ9/);
  });

  it('warns when a residual per trial rests on fewer than 3 residual df of a trial (2 treatments x 2 blocks: 1 df)', () => {
    const thin = simulateNetwork({ seed: 15, trials: 12, treatments: 2, blocks: 2, residualSpread: [0.5, 2] });
    const warned = fitOneStage(thin.network, [], { ...options, residual: 'per-trial' });
    expect(warned.warnings.some((w) => /12 trial\(s\) have fewer than 3 residual degrees of freedom/.test(w))).toBe(true);
    const ample = simulateNetwork({ seed: 15, trials: 12, residualSpread: [0.5, 2] });
    expect(fitOneStage(ample.network, [], { ...options, residual: 'per-trial' }).warnings.some((w) => /residual degrees of freedom/.test(w))).toBe(false);
  });
});
