// "Did you mean": edit distance (checked by hand on textbook pairs) and the closeness limit.
import { describe, expect, it } from 'vitest';
import { closest, didYouMean, editDistance, listNames } from '../../src/spec/closest.js';

describe('closest allowed name', () => {
  it('edit distance counts insertions, deletions and substitutions', () => {
    expect(editDistance('kitten', 'sitting')).toBe(3); // the classic example: k->s, e->i, +g
    expect(editDistance('', 'abc')).toBe(3);
    expect(editDistance('rain', 'rain')).toBe(0);
    expect(editDistance('flaw', 'lawn')).toBe(2);
  });

  it('suggests a plausible typo, ignores case, and stays quiet for unrelated names', () => {
    expect(closest('rian', ['rain', 'ph', 'organic_matter'])).toBe('rain');
    expect(closest('DL', ['reml', 'ml', 'dl', 'pm'])).toBe('dl');
    expect(closest('moderator', ['moderators', 'threshold'])).toBe('moderators');
    expect(closest('yield', ['ph', 'rainfall'])).toBeNull();
    expect(didYouMean('CTRL', ['CTL', 'A1'])).toBe('; did you mean "CTL"?');
    expect(didYouMean('CTL', ['CTL'])).toBe('');
  });

  it('lists at most the given number of names', () => {
    expect(listNames(['a', 'b', 'c'], 2)).toBe('"a", "b" and 1 more');
  });
});
