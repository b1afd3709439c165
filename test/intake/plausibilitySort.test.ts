// The plausibility screen sorts each trial's values as a typed array (native numeric sort) where
// it first used a comparator on a plain array. Reference: that first version of the screen's
// centre and spread, written out here; on trials with ties, zeros of both signs, NaN (missing)
// and decimal slips the listed problems are the same, message for message.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { PLAUSIBLE_ROBUST_Z, screenPlausibility } from '../../src/intake/plausibility.js';

const median = (s: readonly number[]): number => (s.length % 2 === 1 ? s[s.length >> 1] : (s[(s.length >> 1) - 1] + s[s.length >> 1]) / 2);

/** Rows the first version listed: robust z beyond the threshold, from comparator sorts. */
function referenceRows(values: readonly number[], rows: readonly number[]): number[] {
  const sorted = values.filter((v) => !Number.isNaN(v)).sort((a, b) => a - b);
  if (sorted.length < 6) return [];
  const mid = median(sorted);
  const spread = 1.4826 * median(sorted.map((v) => Math.abs(v - mid)).sort((a, b) => a - b));
  if (!(spread > 0)) return [];
  return values.flatMap((v, i) => (Math.abs(v - mid) / spread > PLAUSIBLE_ROBUST_Z ? [rows[i]] : []));
}

const value = fc.oneof(fc.constantFrom(0, -0, NaN, 8, 8.5, 80, 0.8), fc.double({ min: 5, max: 11, noNaN: true }));

describe('plausibility screen with typed-array sorts', () => {
  it('lists the same rows as the comparator sort (ties, -0 and 0, missing values)', () => {
    fc.assert(
      fc.property(fc.array(fc.array(value, { minLength: 1, maxLength: 30 }), { minLength: 1, maxLength: 5 }), (trials) => {
        let row = 2;
        const groups = trials.map((values, t) => ({ trial: `T${t}`, trait: 'y', values, rows: values.map(() => row++) }));
        const listed = screenPlausibility(groups, 'f.csv', 'y', () => '').map((p) => p.row);
        const expected = groups.flatMap((g) => referenceRows(g.values, g.rows)).sort((a, b) => a - b);
        expect(listed).toEqual(expected);
      }),
      { numRuns: 400, seed: 14 },
    );
  });

  it('a median of -0 (the middle of the typed sort here) reads as 0 in the message', () => {
    const values = [0.5, -0, 0.4, -0.3, -0, 0, -0.5, -0, 0.3, -0.4, 60];
    const w = screenPlausibility([{ trial: 'T', trait: 'y', values, rows: values.map((_, i) => i + 2) }], 'f.csv', 'y', () => '');
    expect(w.length).toBeGreaterThan(0);
    expect(w[0].message).toMatch(/from the median 0 of the 11 plots/);
  });
});
