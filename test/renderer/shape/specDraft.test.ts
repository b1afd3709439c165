// The builder writes the spec the command reads: the repository's example spec read into the
// builder and written back is the same document (the price ratio kept as the input price over a
// crop price of 1), and the file's spec passes the core's own schema.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { draftToSpec, priceRatio, specToDraft, type SpecDraft } from '../../../renderer/shape/specDraft.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';

const example = JSON.parse(readFileSync(new URL('../../../examples/demo-analysis.json', import.meta.url), 'utf8')) as Record<string, unknown>;
const base: SpecDraft = { trait: 'yield', control: 'CTL', transform: 'none', contrasts: [], pairwise: 'none', twoStage: null, oneStage: null, moderators: [], threshold: 0, rate: null };

describe('spec drafts', () => {
  it('reads the example spec and writes it back unchanged', () => {
    const again = draftToSpec(specToDraft(example, base));
    expect(again).toEqual(example);
    expect(analysisSpecSchema.safeParse(again).success).toBe(true);
  });

  it('writes the price ratio as input price over crop price', () => {
    expect(priceRatio(1.2, 250)).toBeCloseTo(0.0048, 15);
    const d = specToDraft(example, base);
    const spec = draftToSpec({ ...d, rate: d.rate && { ...d.rate, inputPrice: 3, cropPrice: 600 } });
    expect((spec.rateResponse as { priceRatio: number }).priceRatio).toBe(3 / 600);
  });

  it('writes pooling and the mixed model as null when they are off', () => {
    const spec = draftToSpec(base);
    expect(spec.oneStage).toBeNull();
    expect(spec.twoStage).toBeNull();
    expect(spec.rateResponse).toBeUndefined();
  });

  it('refuses a contrast of no known kind, naming it', () => {
    expect(() => specToDraft({ contrasts: [{ name: 'odd', what: 1 }] }, base)).toThrow(/contrast 1 \("odd"\)/);
  });
});
