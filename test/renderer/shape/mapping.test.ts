import { describe, expect, it } from 'vitest';
import { formFromGuess, formProblems, toMapping, unitFromHeader, unusedHeaders } from '../../../renderer/shape/mapping.js';
import { importMappingSchema } from '../../../src/intake/types.js';

const header = ['site', 'year', 'block', 'trt', 'rate', 'yield (t/ha)', 'notes'];

describe('intake mapping form', () => {
  it('starts from the guess and reads a unit from the header', () => {
    const form = formFromGuess(header, { columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield (t/ha)', factors: { rate: 'rate' } } });
    expect(form.columns.treatment).toBe('trt');
    expect(form.traitName).toBe('yield');
    expect(form.traitUnit).toBe('t/ha');
    expect(form.design).toBe('randomised-blocks');
    expect(form.factors).toEqual([{ name: 'rate', column: 'rate', unit: '' }]);
    expect(unusedHeaders(header, form)).toEqual(['notes']);
    expect(formProblems(form)).toEqual([]);
  });

  it('ignores guessed columns that are not in the file', () => {
    const form = formFromGuess(header, { columns: { treatment: 'treatment' } });
    expect(form.columns.treatment).toBe('');
    expect(formProblems(form)).toContain('Choose the column holding the treatment code.');
  });

  it('says what is missing and when one column has two roles', () => {
    const form = formFromGuess(header, { columns: { site: 'site', treatment: 'trt', response: 'trt' } });
    const problems = formProblems(form);
    expect(problems).toContain('Choose a trial column, or both a site and a year column.');
    expect(problems.some((p) => p.includes('"trt"') && p.includes('both'))).toBe(true);
  });

  it('writes a mapping the core accepts', () => {
    const form = formFromGuess(header, { columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield (t/ha)', factors: { rate: 'rate' } } });
    const mapping = toMapping({ ...form, control: ' CTL ', factors: [{ name: 'rate', column: 'rate', unit: 'kg/ha' }] }, null);
    expect(importMappingSchema.safeParse(mapping).success).toBe(true);
    expect(mapping).toEqual({
      columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield (t/ha)', factors: { rate: 'rate' } },
      trait: { name: 'yield', unit: 't/ha' },
      control: 'CTL',
      factorUnits: { rate: 'kg/ha' },
      design: 'randomised-blocks',
    });
  });

  it('recognises common unit spellings in headers', () => {
    expect(unitFromHeader('Yield_kg_ha')).toBe('kg/ha');
    expect(unitFromHeader('grain [bu/ac]')).toBe('bu/ac');
    expect(unitFromHeader('protein %')).toBe('%');
    expect(unitFromHeader('height')).toBeNull();
  });
});
