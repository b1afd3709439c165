// A log transform with zeros in the data: the offset is decided once over the network and used
// by every trial and by the one-stage model, so ratios from both stages mean the same thing.
// Reference: the rule stated in src/engine/trial/transform.ts (half the smallest positive
// value), applied by hand here to the whole network.
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '../../../src/api/analysis/runAnalysis.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import type { NetworkInput, PlotObservation } from '../../../src/engine/types.js';

function trial(name: string, values: number[][]): { trial: string; design: 'randomised-blocks'; plots: PlotObservation[] } {
  const codes = ['CTL', 'T1', 'T2'];
  return {
    trial: name,
    design: 'randomised-blocks',
    plots: values.flatMap((row, b) => row.map((value, j) => ({ treatment: codes[j], block: String(b + 1), row: null, col: null, value }))),
  };
}

describe('log offset shared across stages', () => {
  const network: NetworkInput = {
    trait: 'count',
    factors: [],
    treatments: [{ code: 'CTL', levels: {} }, { code: 'T1', levels: {} }, { code: 'T2', levels: {} }],
    control: 'CTL',
    trials: [
      trial('A', [[0, 4.0, 6.1], [1.2, 3.1, 5.2], [0.9, 4.4, 7.0]]),
      trial('B', [[2.0, 0.6, 8.1], [2.4, 5.5, 9.0], [1.9, 6.1, 7.7]]),
      trial('C', [[3.0, 5.1, 6.6], [2.8, 4.9, 7.3], [3.3, 5.6, 6.9]]),
    ],
  };

  it('every trial uses half the smallest positive value of the whole network (0.3), also where it has no zeros', () => {
    const spec = analysisSpecSchema.parse({ transform: 'log', contrasts: [{ name: 't2_vs_ctl', coefficients: { CTL: -1, T2: 1 } }], oneStage: null });
    const report = runAnalysis(network, spec, undefined, 'plots');
    const offsets = report.twoStage.trials.map((t) => ('transform' in t ? t.transform.logOffset : null));
    expect(offsets).toEqual([0.3, 0.3, 0.3]); // exact: 0.6 / 2
  });

  it('without zeros no offset is added anywhere', () => {
    const positive: NetworkInput = { ...network, trials: network.trials.slice(2) };
    const spec = analysisSpecSchema.parse({ transform: 'log', contrasts: [], oneStage: null });
    const report = runAnalysis(positive, spec, undefined, 'plots');
    expect(report.twoStage.trials.map((t) => ('transform' in t ? t.transform.logOffset : null))).toEqual([0]);
  });
});
