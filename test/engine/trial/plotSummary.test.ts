// A trial analysed only to be summarised (listPlots: false, detail 'summary') makes no per-plot
// objects and no influential-plot flags; its summary must be the summary of the full analysis,
// field for field. Reference: summariseTrial of the full analysis (listPlots default), on every
// design, balanced and with missing plots, several layouts in a row (the shared layout cache),
// with a log transform, and with plots pushed out so outlier and influential flags occur.
import { describe, expect, it } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import { summariseTrial } from '../../../src/engine/trial/trialSummary.js';
import type { TrialAnalysisOptions } from '../../../src/engine/trial/types.js';
import type { TrialDesign, TrialInput } from '../../../src/engine/types.js';
import { simulateTrial } from './simulate.js';

const designs: TrialDesign[] = ['randomised-blocks', 'completely-randomised', 'latin-square', 'row-column'];

/** Trials of every design, some with missing plots, some with a plot pushed far out. */
function trials(): { trial: TrialInput; treatments: ReturnType<typeof simulateTrial>['treatments'] }[] {
  const out = [];
  let seed = 100;
  for (const design of designs)
    for (const missing of [0, 1, 3])
      for (const pushed of [0, 1]) {
        const sim = simulateTrial(`${design}-${missing}-${pushed}`, design, 5, 4, missing, seed++);
        const plots = sim.trial.plots.map((p, i) => (pushed && i === 7 && p.value !== null ? { ...p, value: p.value + 12 } : p));
        out.push({ trial: { ...sim.trial, plots }, treatments: sim.treatments });
      }
  return out;
}

const base: TrialAnalysisOptions = { transform: 'none', confidence: 0.95, pairwise: 'none' };

describe('a trial analysed only to be summarised', () => {
  for (const transform of ['none', 'log'] as const) {
    it(`gives the summary of the full analysis (transform ${transform}; 24 trials, 4 designs)`, () => {
      let outliers = 0;
      let influential = 0;
      for (const { trial, treatments } of trials()) {
        const options = { ...base, transform };
        const full = analyzeTrial(trial, treatments, [], options);
        const short = analyzeTrial(trial, treatments, [], { ...options, listPlots: false });
        const id = { site: 'S', year: 2024, design: trial.design };
        expect(summariseTrial({ ...short, ...id })).toEqual(summariseTrial({ ...full, ...id }));
        expect(short.diagnostics.plots).toEqual([]);
        expect(short.flags).toEqual(full.flags.filter((f) => f.code !== 'influential-plot'));
        outliers += full.flags.filter((f) => f.code === 'outlier-residual').length;
        influential += full.flags.filter((f) => f.code === 'influential-plot').length;
      }
      // The comparison covered flagged plots of both kinds.
      expect(outliers).toBeGreaterThan(0);
      expect(influential).toBeGreaterThan(0);
    });
  }

  it('full analyses are unchanged: no plotSummary field, every plot listed', () => {
    const { trial, treatments } = trials()[3];
    const full = analyzeTrial(trial, treatments, [], base);
    expect('plotSummary' in full).toBe(false);
    expect(full.diagnostics.plots.length).toBe(trial.plots.filter((p) => p.value !== null).length);
  });
});
