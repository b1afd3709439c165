// Per-trial Gram matrices: a trial laid out like the one before it takes that trial's design
// block by copy (and is marked as sharing its design). Every trial's statistics must equal
// those of the same trial summarised alone, bit for bit, whichever way they were built.
import { describe, expect, it } from 'vitest';
import { buildNetworkStatistics } from '../../../src/engine/onestage/sufficientStatistics.js';
import { sameDesign } from '../../../src/engine/onestage/trialBlock.js';
import type { NetworkInput } from '../../../src/engine/types.js';
import { simulateNetwork } from './support/simulateNetwork.js';

describe('network statistics', () => {
  it('equal the trial-alone statistics; shared designs are marked only where the designs are identical', () => {
    // runs of complete trials broken by trials with missing plots, so both routes are taken
    const complete = simulateNetwork({ seed: 31, trials: 6 }).network;
    const holed = simulateNetwork({ seed: 32, trials: 6, missing: 0.15 }).network;
    const network: NetworkInput = { ...complete, trials: [0, 1, 2, 3, 4, 5].flatMap((i) => (i % 2 ? [complete.trials[i], holed.trials[i]] : [complete.trials[i]])) };
    const random = ['trial', 'block', 'treatment-by-trial'] as const;
    const stats = buildNetworkStatistics(network, [...random]);
    let shared = 0;
    stats.trials.forEach((t, i) => {
      const alone = buildNetworkStatistics({ ...network, trials: [network.trials[i]] }, [...random]).trials[0];
      expect(Array.from(t.gram)).toEqual(Array.from(alone.gram));
      expect(t.n).toBe(alone.n);
      expect(Array.from(t.fixedIndex)).toEqual(Array.from(alone.fixedIndex));
      if (t.sameDesignAs >= 0) {
        shared++;
        expect(t.sameDesignAs).toBeLessThan(i);
        expect(sameDesign(stats.trials[t.sameDesignAs], t)).toBe(true);
      }
    });
    // complete trials 0, 1 are adjacent (the copy route is taken at least once)
    expect(shared).toBeGreaterThan(0);
  });
});
