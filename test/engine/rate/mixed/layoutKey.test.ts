// The mixed quadratic groups trials by layout comparing numbers as numbers (layoutKey.ts); the
// grouping it replaced built a text key of every number. Reference: that text key, written out
// here. Both must give the same layout of every trial and the same representatives, exactly.
import { describe, expect, it } from 'vitest';
import { mixedQuadraticData, type MixedTrialData } from '../../../../src/engine/rate/mixed/mixedData.js';
import { groupLayouts } from '../../../../src/engine/rate/mixed/layoutKey.js';
import { generateRateNetwork, quadraticCurve } from '../generateRateNetwork.js';

function byTextKey(trials: readonly MixedTrialData[]): { layoutOf: number[]; representatives: MixedTrialData[] } {
  const index = new Map<string, number>();
  const representatives: MixedTrialData[] = [];
  const layoutOf = trials.map((t) => {
    const key = `${t.q}|${t.indicatorFactor.join(',')}|${t.ztz.join(',')}|${t.ztx.join(',')}|${t.xtx.join(',')}`;
    let j = index.get(key);
    if (j === undefined) {
      j = representatives.length;
      index.set(key, j);
      representatives.push(t);
    }
    return j;
  });
  return { layoutOf, representatives };
}

const curves = [quadraticCurve(5, 0.03, -0.0001), quadraticCurve(6, 0.02, -0.00006)];

describe('trial layouts of the mixed quadratic', () => {
  it.each([
    ['balanced, one layout', 0, undefined],
    ['a plot dropped at random per trial, many layouts', 1, undefined],
    ['three designs, plots dropped', 1, ['randomised-blocks', 'row-column', 'completely-randomised'] as const],
  ])('%s: the same grouping as the text key', (_name, dropPlots, designs) => {
    const network = generateRateNetwork({ seed: 23 + dropPlots, trials: 400, curves, sd: 0.3, dropPlots, designs: designs ? [...designs] : undefined });
    const rates = new Map(network.treatments.map((t) => [t.code, Number(t.levels.rate)]));
    const d = mixedQuadraticData(network, rates);
    const fast = groupLayouts(d.trials);
    const text = byTextKey(d.trials);
    expect(Array.from(fast.layoutOf)).toEqual(text.layoutOf);
    expect(fast.representatives.length).toBe(text.representatives.length);
    fast.representatives.forEach((t, j) => expect(t).toBe(text.representatives[j]));
    if (dropPlots > 0) expect(text.representatives.length).toBeGreaterThan(3);
  });

  it('counts 0 and -0 as one value and NaN as equal to NaN, as the text key did', () => {
    const network = generateRateNetwork({ seed: 3, trials: 4, curves, sd: 0.3, dropPlots: 0 });
    const rates = new Map(network.treatments.map((t) => [t.code, Number(t.levels.rate)]));
    const [a, b, c, e] = mixedQuadraticData(network, rates).trials;
    const edited = (t: MixedTrialData, i: number, x: number): MixedTrialData => {
      const ztz = Float64Array.from(t.ztz);
      ztz[i] = x;
      return { ...t, ztz };
    };
    const zero = a.ztz.findIndex((x) => x === 0);
    expect(zero).toBeGreaterThanOrEqual(0);
    const trials = [a, edited(b, zero, -0), edited(c, 0, NaN), edited(e, 0, NaN), edited(e, 0, a.ztz[0] * (1 + 2 ** -52))];
    const fast = groupLayouts(trials);
    expect(Array.from(fast.layoutOf)).toEqual(byTextKey(trials).layoutOf);
    expect(Array.from(fast.layoutOf)).toEqual([0, 0, 1, 1, 2]);
  });
});
