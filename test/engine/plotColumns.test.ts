// Plots held column by column (engine/plotColumns.ts) must mean exactly what plot objects mean:
// the object form built from columns, how copies treat the columns, and the one-stage fit from
// columns against the same fit from objects (bit for bit: same sums in the same order).
import { describe, expect, it } from 'vitest';
import { plotsFromColumns, trialOverColumns, type PlotColumnTable } from '../../src/engine/plotColumns.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../src/engine/types.js';
import { fitOneStage } from '../../src/engine/onestage/fitOneStage.js';
import { simulateNetwork } from './onestage/support/simulateNetwork.js';

/** The columns of a network given as objects (trials contiguous, in order); plot ids kept as text where they are strings. */
function toColumns(network: NetworkInput): NetworkInput {
  const codes = network.treatments.map((t) => t.code);
  const labels: string[] = [];
  const all = network.trials.flatMap((t) => t.plots);
  const n = all.length;
  const table: PlotColumnTable = {
    treatmentCodes: codes,
    treatment: Int32Array.from(all, (p) => codes.indexOf(p.treatment)),
    blockLabels: labels,
    block: Int32Array.from(all, (p) => {
      if (p.block === null) return -1;
      if (!labels.includes(p.block)) labels.push(p.block);
      return labels.indexOf(p.block);
    }),
    value: Float64Array.from(all, (p) => p.value ?? NaN),
    row: Float64Array.from(all, (p) => p.row ?? NaN),
    col: Float64Array.from(all, (p) => p.col ?? NaN),
    plotText: all.map((p) => (typeof p.plotId === 'string' ? p.plotId : null)),
    sourceRow: Int32Array.from(all, (p, i) => (typeof p.plotId === 'number' ? p.plotId : i + 2)),
  };
  expect(table.treatment.length).toBe(n);
  let start = 0;
  const trials = network.trials.map((t) => {
    const { plots, ...fields } = t;
    const trial = trialOverColumns(fields, { table, start, count: plots.length });
    start += plots.length;
    return trial;
  });
  return { ...network, trials };
}

/**
 * The simulated network with plot ids (text on odd plots, numbers on even), as a file reader gives
 * them: a text id is the plot's label, a number its file row (every plot's row is its place + 2).
 */
function withIds(network: NetworkInput): NetworkInput {
  let k = 0;
  return {
    ...network,
    trials: network.trials.map((t) => ({
      ...t,
      plots: t.plots.map((p) => {
        const i = k++;
        return i % 2 ? { ...p, plotId: `p${i + 1}`, label: `p${i + 1}`, sourceRow: i + 2 } : { ...p, plotId: i + 2, label: null, sourceRow: i + 2 };
      }),
    })),
  };
}

describe('plot columns', () => {
  it('build the same plot objects, with null for missing values, rows, columns and blocks', () => {
    const table: PlotColumnTable = {
      treatmentCodes: ['CTL', 'N1'],
      treatment: Int32Array.of(0, 1, 1),
      blockLabels: ['I'],
      block: Int32Array.of(0, -1, 0),
      value: Float64Array.of(4.5, NaN, 0),
      row: Float64Array.of(1, NaN, 2),
      col: null,
      plotText: ['p1', null, 'p3'],
      sourceRow: Int32Array.of(2, 3, 4),
    };
    expect(plotsFromColumns({ table, start: 1, count: 2 })).toEqual<PlotObservation[]>([
      { plotId: 3, label: null, sourceRow: 3, treatment: 'N1', block: null, row: null, col: null, value: null },
      { plotId: 'p3', label: 'p3', sourceRow: 4, treatment: 'N1', block: 'I', row: 2, col: null, value: 0 },
    ]);
  });

  it('are dropped by copies, which carry the plots instead', () => {
    const network = withIds(simulateNetwork({ seed: 5, trials: 2 }).network);
    const columnar = toColumns(network);
    const trial = columnar.trials[0];
    expect(trial.plotColumns).toBeDefined();
    expect(Object.keys(trial)).toContain('plots');
    const copy: TrialInput = { ...trial, plots: trial.plots.map((p) => ({ ...p, value: (p.value ?? 0) * 2 })) };
    expect(copy.plotColumns).toBeUndefined();
    const spread: TrialInput = { ...trial };
    expect(spread.plotColumns).toBeUndefined();
    expect(spread.plots).toEqual(network.trials[0].plots);
    expect(JSON.parse(JSON.stringify(trial))).toEqual(JSON.parse(JSON.stringify(network.trials[0])));
  });

  it('give the one-stage fit the plot objects give, bit for bit (common and per-trial residual, missing plots)', () => {
    const { network } = simulateNetwork({ seed: 11, trials: 12, residualSpread: [0.5, 2] });
    // knock out a few plots so dropped values take the same path in both forms
    const holed: NetworkInput = { ...network, trials: network.trials.map((t, i) => ({ ...t, plots: t.plots.map((p, k) => ((k + i) % 9 === 0 ? { ...p, value: null } : p)) })) };
    const columnar = toColumns(holed);
    for (const residual of ['common', 'per-trial'] as const) {
      const options = { random: ['trial', 'block', 'treatment-by-trial'] as const, residual, df: 'satterthwaite' as const, confidence: 0.95, lrt: false, profile: false };
      const a = fitOneStage(holed, [], { ...options, random: [...options.random] });
      const b = fitOneStage(columnar, [], { ...options, random: [...options.random] });
      expect(b.droppedPlots).toBeGreaterThan(0);
      const { run: ra, ...restA } = a;
      const { run: rb, ...restB } = b;
      expect(restB).toEqual(restA);
      expect(rb.criterionPath).toEqual(ra.criterionPath);
    }
  });
});
