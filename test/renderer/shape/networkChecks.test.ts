// The network screen's range lines: one per factor and distinct range, counting and naming its
// trials, lowest range first (common practice for a compact summary; inputs written by hand).
import { describe, expect, it } from 'vitest';
import { rangeLines } from '../../../renderer/shape/networkChecks.js';

const base = { trait: 'y', trials: 4, singleTrialTreatments: [], connectedGroups: [['A', 'B', 'C', 'D']], disconnected: [], warnings: [] };

describe('rangeLines', () => {
  it('groups trials by tested range per factor, with units and thousands separators', () => {
    const lines = rangeLines({
      ...base,
      ranges: [
        { factor: 'rate', unit: 'kg/ha', trial: 'B', lowest: 0, highest: 180, levels: 4 },
        { factor: 'rate', unit: 'kg/ha', trial: 'A', lowest: 0, highest: 120, levels: 4 },
        { factor: 'rate', unit: 'kg/ha', trial: 'C', lowest: 0, highest: 180, levels: 3 },
        { factor: 'seeds', unit: null, trial: 'D', lowest: 1500, highest: 3000, levels: 2 },
      ],
    });
    expect(lines).toEqual([
      { factor: 'rate', text: 'rate 0–120 kg/ha in 1 trial', trials: ['A'] },
      { factor: 'rate', text: 'rate 0–180 kg/ha in 2 trials', trials: ['B', 'C'] },
      { factor: 'seeds', text: 'seeds 1,500–3,000 in 1 trial', trials: ['D'] },
    ]);
  });

  it('gives nothing for a network without numeric factors', () => {
    expect(rangeLines({ ...base, ranges: [] })).toEqual([]);
  });
});
