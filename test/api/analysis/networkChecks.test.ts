// Network checks before fitting, on small networks written out by hand so the expected groups,
// single-trial treatments and ranges can be read off directly (common practice: two trials are
// connected when they share a treatment).
import { describe, expect, it } from 'vitest';
import { checkNetwork } from '../../../src/api/analysis/networkChecks.js';
import { testedTreatments } from '../../../src/api/analysis/testedTreatments.js';
import type { NetworkInput, TreatmentInfo } from '../../../src/engine/types.js';

const T = (code: string, rate: number | null): TreatmentInfo => ({ code, levels: { rate } });
const treatments = [T('CTL', 0), T('A', 50), T('B', 100), T('X', 30), T('Y', 60), T('Z', 90)];

function network(trials: Record<string, string[]>): NetworkInput {
  return {
    trait: 'y',
    factors: [{ name: 'rate', kind: 'numeric', unit: 'kg/ha' }],
    treatments,
    trials: Object.entries(trials).map(([trial, codes]) => ({
      trial,
      design: 'completely-randomised' as const,
      plots: codes.flatMap((c) => [1, 2].map((r) => ({ treatment: c, block: null, row: null, col: null, value: r }))),
    })),
  };
}

describe('checkNetwork', () => {
  it('finds treatments tested in one trial, disconnected groups and differing rate ranges', () => {
    const n = network({ t1: ['CTL', 'A', 'B'], t2: ['CTL', 'A'], t3: ['X', 'Y'], t4: ['Y', 'Z'] });
    const c = checkNetwork(n, n.trials.map((t) => testedTreatments(t, n.treatments)));
    expect(c.singleTrialTreatments).toEqual([{ treatment: 'B', trial: 't1' }, { treatment: 'X', trial: 't3' }, { treatment: 'Z', trial: 't4' }]);
    expect(c.connectedGroups).toEqual([['t1', 't2'], ['t3', 't4']]);
    expect(c.ranges.find((r) => r.trial === 't3')).toEqual({ factor: 'rate', trial: 't3', lowest: 30, highest: 60, levels: 2 });
    expect(c.warnings).toHaveLength(3);
    expect(c.warnings[1]).toMatch(/fall into 2 groups that share no treatment with each other.*\{t1, t2\}, \{t3, t4\}/);
    expect(c.warnings[2]).toMatch(/^trials tested different rate ranges \(kg\/ha\): 0 to 100 in 1 trial \(t1\); 0 to 50 in 1 trial \(t2\)/);
  });

  it('says nothing about a connected network where every trial tested the same set', () => {
    const n = network({ t1: ['CTL', 'A', 'B'], t2: ['CTL', 'A', 'B'] });
    expect(checkNetwork(n, n.trials.map((t) => testedTreatments(t, n.treatments))).warnings).toEqual([]);
  });
});
