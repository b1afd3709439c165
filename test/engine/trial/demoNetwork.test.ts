// The demo network (src/demo, invented data with planted quirks): the column-trend trial is
// flagged by the spatial check, the outlier plot is flagged, and neither is dropped. The
// planted quirks are the external truth here (stated in src/demo/generate.ts).
import { describe, it, expect } from 'vitest';
import { generateDemoNetwork } from '../../../src/demo/generate.js';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import type { PlotObservation, TrialInput } from '../../../src/engine/types.js';

const { table, truth } = generateDemoNetwork();

function trialInput(key: string, trait = 'yield'): TrialInput {
  const t = table.trials.find((x) => x.key === key)!;
  const values = new Map(table.observations.filter((o) => o.trait === trait).map((o) => [o.plot, o.value]));
  const plots: PlotObservation[] = [];
  table.plots.forEach((p, i) => {
    if (p.trialKey === key) plots.push({ plotId: i, treatment: p.treatment, block: p.block, row: p.row, col: p.col, value: values.get(i) ?? null });
  });
  return { trial: key, design: t.design, plots };
}

describe('demo network quirks are flagged, never dropped', () => {
  it('the column-trend trial is flagged by the spatial check, with all its plots analysed', () => {
    const key = truth.quirks.columnTrend.trial;
    const input = trialInput(key);
    const res = analyzeTrial(input, table.treatments, [], { transform: 'none', confidence: 0.95, pairwise: 'none' });
    expect(res.diagnostics.spatial.flagged).toBe(true);
    expect(res.flags.find((f) => f.code === 'spatial-trend')?.message).toMatch(/columns/);
    expect(res.model.n).toBe(input.plots.filter((p) => p.value !== null).length);
  });

  it('the outlier plot is flagged by its studentised residual and stays in the analysis', () => {
    const q = truth.quirks.outlier;
    const input = trialInput(q.trial);
    const res = analyzeTrial(input, table.treatments, [], { transform: 'none', confidence: 0.95, pairwise: 'none' });
    const flag = res.flags.find((f) => f.code === 'outlier-residual');
    expect(flag).toBeDefined();
    const plot = input.plots.find((p) => p.plotId === flag!.plotId)!;
    expect([plot.treatment, plot.block]).toEqual([q.treatment, q.block]);
    expect(res.diagnostics.plots.some((p) => p.plotId === flag!.plotId)).toBe(true);
    expect(res.excluded).toEqual([]);
  });

  it('trials without planted trends are mostly not flagged by the spatial check (at p < 0.01 a rare false alarm is allowed)', () => {
    const keys = table.trials.map((t) => t.key).filter((k) => k !== truth.quirks.columnTrend.trial);
    const flagged = keys.filter((k) => analyzeTrial(trialInput(k), table.treatments, [], { transform: 'none', confidence: 0.95, pairwise: 'none' }).diagnostics.spatial.flagged);
    expect(flagged.length).toBeLessThanOrEqual(Math.max(1, Math.ceil(0.05 * keys.length)));
  });
});
