// The screens word a probability as the report does: the same text for the same value, across
// the ends (0, tiny, 0.5%, 99.5%, near 1, 1) and the middle, so a committee member comparing
// the screen with the printed report reads the same words.
import { describe, expect, it } from 'vitest';
import { formatProbability } from '../../../renderer/shape/format.js';
import { pooledWords } from '../../../renderer/shape/heterogeneity.js';
import { num } from '../../../src/report/html/markup.js';
import { probabilityText } from '../../../src/report/text/numbers.js';

const reportText = (v: number) => num('k', v, 0, { percent: true }).replace(/<[^>]+>/g, '').replace(/&lt;/g, '<');

describe('probability wording, screens, report and text summary', () => {
  it('agrees value for value', () => {
    const values = [0, 1e-12, 0.001, 0.0049, 0.005, 0.0051, 0.03, 0.125, 0.5, 0.875, 0.994, 0.9949, 0.995, 0.99501, 0.999, 1 - 1e-12, 1];
    for (const v of values) {
      expect(formatProbability(v), String(v)).toBe(reportText(v));
      // and the command's text summary
      expect(probabilityText(v), String(v)).toBe(reportText(v));
    }
  });

  it('never shows a rounded certainty', () => {
    expect(formatProbability(0.9996)).toBe('more than 99.5%');
    expect(formatProbability(0.0004)).toBe('less than 0.5%');
    // 995 of 1,000 draws: the end itself, not a rounded 100%
    expect(formatProbability(995 / 1000)).toBe('99.5%');
    expect(probabilityText(995 / 1000)).toBe('99.5%');
    expect(formatProbability(5 / 1000)).toBe('0.5%');
    expect(formatProbability(null)).toBe('–');
  });

  it('is what the pooled sentence on screen says', () => {
    const p = { estimate: 1.37, lower: 1.24, upper: 1.5, p: 1e-9, tau2: 0.1, I2: 0.8, Qp: 0.001, k: 41, predictionLower: 0.69, predictionUpper: 2.05, probPositive: 0.99993, probAboveThreshold: 0.9971 };
    const words = pooledWords(p, 't/ha', 0.3, (v) => (v === null ? '–' : v.toFixed(2)));
    expect(words).toContain('The chance of a positive response at a new site is more than 99.5%');
    expect(words).toContain('above the break-even 0.30 t/ha, more than 99.5%.');
    expect(words).not.toMatch(/100%/);
  });
});
