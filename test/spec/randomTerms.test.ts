// Random terms are named in words; a formula language's colon form is refused with the word to write.
import { describe, expect, it } from 'vitest';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';
import { z } from '../../src/spec/zod.js';

function message(random: unknown[]): string {
  const r = analysisSpecSchema.safeParse({ oneStage: { random } });
  expect(r.success).toBe(false);
  return r.success ? '' : z.prettifyError(r.error);
}

describe('oneStage.random', () => {
  it('accepts the word names and defaults to all three', () => {
    expect(analysisSpecSchema.parse({ oneStage: { random: ['trial', 'block', 'treatment-by-trial'] } }).oneStage?.random).toEqual(['trial', 'block', 'treatment-by-trial']);
    expect(analysisSpecSchema.parse({ oneStage: {} }).oneStage?.random).toEqual(['trial', 'block', 'treatment-by-trial']);
  });
  it('refuses "treatment:trial" (either order) and names "treatment-by-trial"', () => {
    for (const old of ['treatment:trial', 'trial:treatment']) {
      const m = message(['trial', old]);
      expect(m).toContain(`"${old}"`);
      expect(m).toContain('write "treatment-by-trial"');
    }
  });
  it('refuses other colon forms and unknown names, listing the words', () => {
    expect(message(['site:year'])).toMatch(/formula notation.*"trial", "block", "treatment-by-trial"/);
    expect(message(['plots'])).toMatch(/unknown random term "plots"; random terms are "trial", "block", "treatment-by-trial"/);
  });
});
