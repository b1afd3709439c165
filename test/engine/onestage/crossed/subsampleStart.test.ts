// Start values from a subsample of sites must lead the AI-REML search to the same optimum as the
// plain start (all relative sds 1) and in fewer Newton steps; the optimum itself is checked
// against lme4 in fitCrossed.test.ts. Tolerances: criterion 1e-10 relative (rounding of a criterion
// near 1e4), variance ratios 1e-5 relative.
import { describe, expect, it } from 'vitest';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { optimiseCrossed } from '../../../../src/engine/onestage/crossed/optimiseCrossed.js';
import { SUBSAMPLE_SITES, subsampleStart } from '../../../../src/engine/onestage/crossed/subsampleStart.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];

describe('subsample start for large crossed fits', () => {
  it('reaches the plain start\'s optimum in fewer steps (150 sites over 4 years)', () => {
    const sim = simulateCrossed({ seed: 71, sites: 150, years: 4, runProbability: 0.7, missing: 0.05 });
    const d = crossedData(sim.network, ALL, false);
    const L = crossedLayout(d, ALL, false);
    const start = subsampleStart(d, L, []);
    expect(start).not.toBeNull();
    const fromSub = optimiseCrossed(d, L, start!);
    const plain = optimiseCrossed(d, L, L.terms.map(() => 1));
    expect(fromSub.search).toBe('average-information');
    expect(fromSub.iterations).toBeLessThan(plain.iterations);
    expect(Math.abs(fromSub.evaluation.criterion - plain.evaluation.criterion) / plain.evaluation.criterion).toBeLessThan(1e-10);
    L.terms.forEach((t, k) => expect(Math.abs(fromSub.evaluation.theta[k] ** 2 - plain.evaluation.theta[k] ** 2) / plain.evaluation.theta[k] ** 2, t).toBeLessThan(1e-5));
  });
  it(`is not used at ${2 * SUBSAMPLE_SITES} sites or fewer`, () => {
    const sim = simulateCrossed({ seed: 72, sites: 20, years: 3 });
    const d = crossedData(sim.network, ALL, false);
    expect(subsampleStart(d, crossedLayout(d, ALL, false), [])).toBeNull();
  });
});
