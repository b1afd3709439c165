// The plain-language sentences claim no more than the intervals support: a direction only when
// the confidence interval excludes zero, a possible loss when the prediction interval spans
// zero, and probabilities near 0 or 1 shown as bounds (common reporting practice, no single source).
import { describe, expect, it } from 'vitest';
import type { CompactAnalysisReport } from '../../../src/api/analysis/report.js';
import { contrastSentence } from '../../../src/report/html/sections/summarySentences.js';

function report(p: Record<string, unknown>, unit = 't/ha'): CompactAnalysisReport {
  const pooled = { name: 'treated_vs_control', meaning: 'treated minus control', k: 12, se: 0.1, estimate: 0.3, lower: 0.1, upper: 0.5, predictionLower: 0.05, predictionUpper: 0.6, probPositive: 0.97, probAboveThreshold: 0.6, ...p };
  // A partial report: only the fields the sentences read (the whole document is built in test/report/demoReport.test.ts).
  return { unit: 't/ha', trait: 'yield', settings: { confidence: 0.95, threshold: 0.2, transform: 'none' }, contrastUnits: { treated_vs_control: unit }, twoStage: { pooled: [pooled], trials: [] } } as unknown as CompactAnalysisReport;
}

const text = (html: string) => html.replace(/<[^>]+>/g, '');

describe('summary sentences', () => {
  it('states a direction only when the interval excludes zero', () => {
    expect(text(contrastSentence(report({}), 0))).toContain('the effect was positive: 0.30 t/ha');
    const unclear = text(contrastSentence(report({ estimate: 0.1, lower: -0.1, upper: 0.3 }), 0));
    expect(unclear).toContain('do not show a clear effect');
    expect(unclear).not.toMatch(/positive:|negative:|raised/);
    expect(text(contrastSentence(report({ estimate: -0.3, lower: -0.5, upper: -0.1 }), 0))).toContain('the effect was negative');
  });

  it('says a loss cannot be ruled out when the prediction interval spans zero', () => {
    expect(text(contrastSentence(report({ predictionLower: -0.2 }), 0))).toContain('a loss at some sites cannot be ruled out');
    expect(text(contrastSentence(report({}), 0))).not.toContain('loss');
  });

  it('gives the chance of a profitable response in the trait unit only, and bounds near-certain chances', () => {
    expect(text(contrastSentence(report({ probAboveThreshold: 0.999 }), 0))).toContain('profitable response at current prices) is more than 99.5%');
    const slope = text(contrastSentence(report({}, 't/ha per kg/ha'), 0));
    expect(slope).not.toContain('profitable');
    expect(slope).toContain('chance of a positive effect at a new site is 97%');
  });

  it('says so when there are too few trials for a prediction', () => {
    expect(text(contrastSentence(report({ predictionLower: null, predictionUpper: null, k: 2 }), 0))).toContain('Too few trials for a prediction');
  });
});
