// Behaviour that is not a number to match: aliasing never crashes and is reported,
// exclusions are recorded and respected, flags never drop a plot, bad input gets a clear
// error, and the result is plain JSON. Numbers used here are checked against hand values
// (stated) or are structural.
import { describe, it, expect } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import { TrialInputError } from '../../../src/engine/trial/errors.js';
import type { EstimableContrast, TrialAnalysisOptions } from '../../../src/engine/trial/types.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import type { PlotObservation, TreatmentInfo, TrialInput } from '../../../src/engine/types.js';
import { simulateTrial } from './simulate.js';

const opts: TrialAnalysisOptions = { transform: 'none', confidence: 0.95, pairwise: 'tukey' };
const diff = (a: string, b: string): ResolvedContrast => ({ name: `${a}-${b}`, kind: 'coefficients', coefficients: { [a]: 1, [b]: -1 }, divisor: 1, meaning: '' });
const trts = (codes: string[]): TreatmentInfo[] => codes.map((code) => ({ code, levels: {} }));

describe('trial engine behaviour', () => {
  it('disconnected blocks: within-block differences estimable (hand: mean within-block difference), across-block ones refused with a reason; no crash', () => {
    // Block 1 holds T1, T2; block 2 holds T3, T4 (two replicates each).
    const v: [string, string, number][] = [['1', 'T1', 10], ['1', 'T2', 13], ['1', 'T1', 11], ['1', 'T2', 15], ['2', 'T3', 20], ['2', 'T4', 21], ['2', 'T3', 22], ['2', 'T4', 25]];
    const plots: PlotObservation[] = v.map(([block, treatment, value], i) => ({ plotId: i + 1, block, treatment, row: null, col: null, value }));
    const res = analyzeTrial({ trial: 'disc', design: 'randomised-blocks', plots }, trts(['T1', 'T2', 'T3', 'T4']), [diff('T2', 'T1'), diff('T3', 'T1')], opts);
    expect(res.aliased.length).toBe(1);
    const within = res.contrasts[0] as EstimableContrast;
    expect(within.estimable).toBe(true);
    expect(Math.abs((within.estimate as number) - (14 - 10.5))).toBeLessThan(1e-12);
    expect(res.contrasts[1].estimable).toBe(false);
    expect(res.means.every((m) => !m.estimable)).toBe(true);
    expect(JSON.parse(JSON.stringify(res))).toEqual(res);
  });

  it('excluded plots are left out and listed with their reason; missing plots listed; outlier flagged but kept', () => {
    const sim = simulateTrial('x', 'randomised-blocks', 5, 4, 0, 42);
    const plots = sim.trial.plots.map((p, i) => (i === 3 ? { ...p, excluded: { reason: 'hail damage' } } : i === 7 ? { ...p, value: (p.value as number) + 15 } : i === 12 ? { ...p, value: null } : p));
    const trial: TrialInput = { ...sim.trial, plots };
    const res = analyzeTrial(trial, sim.treatments, [], opts);
    expect(res.excluded).toEqual([{ plotId: 4, label: null, treatment: plots[3].treatment, reason: 'hail damage' }]);
    expect(res.missing.length).toBe(1);
    expect(res.model.n).toBe(20 - 2);
    expect(res.diagnostics.plots.some((p) => p.plotId === 4)).toBe(false);
    const outlier = res.flags.find((f) => f.code === 'outlier-residual');
    expect(outlier?.plotId).toBe(8);
    expect(res.diagnostics.plots.some((p) => p.plotId === 8)).toBe(true);
    expect(res.flags.map((f) => f.code)).toEqual(expect.arrayContaining(['excluded-plots', 'missing-plots', 'influential-plot']));
  });

  it('a column gradient not absorbed by row-wise blocks is flagged with advice; no flag without one', () => {
    // randomised-blocks with block = column in simulateTrial; rebuild so blocks run along rows.
    const sim = simulateTrial('g', 'row-column', 6, 4, 0, 9);
    const withTrend = (slope: number): TrialInput => ({
      trial: 'g',
      design: 'randomised-blocks',
      plots: sim.trial.plots.map((p) => ({ ...p, block: `R${p.row}`, value: (p.value as number) - 0.15 * (p.col as number) + slope * ((p.col as number) - 3.5) ** 2 })),
    });
    const flagged = analyzeTrial(withTrend(1.5), sim.treatments, [], opts);
    expect(flagged.diagnostics.spatial.flagged).toBe(true);
    const flag = flagged.flags.find((f) => f.code === 'spatial-trend');
    expect(flag?.message).toMatch(/columns/);
    expect(flag?.message).toMatch(/row-column or spatial model/);
    expect(flagged.diagnostics.spatial.rows?.available).toBe(false); // rows are the blocks
    const calm = analyzeTrial(withTrend(0), sim.treatments, [], opts);
    expect(calm.diagnostics.spatial.available).toBe(true);
    expect(calm.flags.some((f) => f.code === 'spatial-trend')).toBe(calm.diagnostics.spatial.flagged);
    const noPos = analyzeTrial({ ...withTrend(0), plots: withTrend(0).plots.map((p) => ({ ...p, row: null, col: null })) }, sim.treatments, [], opts);
    expect(noPos.diagnostics.spatial.available).toBe(false);
    expect(noPos.diagnostics.spatial.reason).toMatch(/not available/);
  });

  it('no error df: one plot per treatment gives nulls and a flag, not a crash; the result is plain JSON', () => {
    const plots: PlotObservation[] = ['A', 'B', 'C'].map((t, i) => ({ plotId: i, treatment: t, block: null, row: null, col: null, value: i * 2 + 1 }));
    const res = analyzeTrial({ trial: 'n1', design: 'completely-randomised', plots }, trts(['A', 'B', 'C']), [diff('B', 'A')], opts);
    expect(res.model.residualDf).toBe(0);
    expect(res.flags.some((f) => f.code === 'no-error-df')).toBe(true);
    expect(Math.abs(((res.contrasts[0] as EstimableContrast).estimate as number) - 2)).toBeLessThan(1e-12);
    expect((res.contrasts[0] as EstimableContrast).se).toBeNull();
    const json = JSON.stringify(res);
    expect(json).not.toMatch(/NaN|Infinity/);
    expect(JSON.parse(json)).toEqual(res);
  });

  it('clear errors: unknown treatment, blocks trial without a block, Latin square without positions', () => {
    const base: PlotObservation = { plotId: 'p7', treatment: 'A', block: '1', row: 1, col: 1, value: 1 };
    expect(() => analyzeTrial({ trial: 't', design: 'randomised-blocks', plots: [{ ...base, treatment: 'Z' }] }, trts(['A']), [], opts)).toThrow(/trial "t", plot p7: treatment "Z" is not in the protocol/);
    expect(() => analyzeTrial({ trial: 't', design: 'randomised-blocks', plots: [{ ...base, block: null }] }, trts(['A']), [], opts)).toThrow(TrialInputError);
    expect(() => analyzeTrial({ trial: 't', design: 'latin-square', plots: [{ ...base, col: null }] }, trts(['A']), [], opts)).toThrow(/row and a column/);
  });
});
