import { describe, expect, it } from 'vitest';
import { flagCounts, flagWord, groupFlags, sortTrials } from '../../../renderer/shape/trialTable.js';

const trial = (id: number, site: string, year: number, codes: string[] = []) => ({ id, label: `${site}-${year}`, site, year, flags: codes.map((code) => ({ code, message: `${code} ${id}` })) });

describe('trial table shaping', () => {
  it('sorts by site then year and filters by site', () => {
    const rows = [trial(1, 'KEL', 2023), trial(2, 'ASH', 2025), trial(3, 'ASH', 2023)];
    expect(sortTrials(rows, null).map((r) => r.id)).toEqual([3, 2, 1]);
    expect(sortTrials(rows, 'KEL').map((r) => r.id)).toEqual([1]);
  });
  it('counts trials per flag once per trial, most frequent first', () => {
    const rows = [trial(1, 'A', 1, ['outlier-residual', 'outlier-residual', 'spatial-trend']), trial(2, 'B', 1, ['spatial-trend'])];
    expect(flagCounts(rows)).toEqual([
      { code: 'spatial-trend', word: 'field trend', trials: 2 },
      { code: 'outlier-residual', word: 'outlier', trials: 1 },
    ]);
  });
  it('groups a trial’s flags by kind and names unknown codes readably', () => {
    const g = groupFlags(trial(1, 'A', 1, ['influential-plot', 'spatial-trend', 'influential-plot']).flags);
    expect(g.map((x) => [x.code, x.messages.length])).toEqual([
      ['influential-plot', 2],
      ['spatial-trend', 1],
    ]);
    expect(flagWord('some-new-code')).toBe('some new code');
  });
});
