import { describe, expect, it } from 'vitest';
import { readMappingFile } from '../../src/intake/index.js';
import { brief, problemsOf, writeTemp } from './helpers.js';

describe('readMappingFile', () => {
  it('reads the mapping of the issue example', () => {
    const path = writeTemp(
      'map.json',
      JSON.stringify({
        columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
        trait: { name: 'y', unit: 't/ha' },
        control: 'CTL',
        factorUnits: { rate: 'kg/ha' },
      }),
    );
    const m = readMappingFile(path);
    expect(m.columns.factors).toEqual({ rate: 'rate', timing: 'timing' });
    expect(m.trait).toEqual({ name: 'y', unit: 't/ha' });
  });

  it('names the file and the line of a JSON syntax error', async () => {
    const path = writeTemp('bad.json', '{\n  "columns": {"treatment": "trt"},\n  "control": "CTL"\n  "trait": {}\n}');
    const p = await problemsOf(() => readMappingFile(path));
    expect(p).toHaveLength(1);
    expect(p[0].file).toBe(path);
    expect(p[0].rule).toBe('bad-json');
    expect(p[0].row).toBe(4);
  });

  it('names each key that breaks the schema', async () => {
    const path = writeTemp('schema.json', JSON.stringify({ columns: { treatment: 'trt', response: 7, trial: 'env', colour: 'x' }, trait: { name: 'y' }, decimalComma: 'yes' }));
    const p = await problemsOf(() => readMappingFile(path));
    expect(p.every((x) => x.file === path)).toBe(true);
    expect(brief(p).sort()).toEqual(
      [
        ['mapping-schema', 0, 'columns.response', '7'],
        ['mapping-unknown-key', 0, 'columns.colour', 'x'],
        ['mapping-schema', 0, 'trait.unit', null],
        ['mapping-schema', 0, 'decimalComma', 'yes'],
      ].sort(),
    );
  });

  it('says which required entries are missing and which units are unknown', async () => {
    const path = writeTemp('incomplete.json', JSON.stringify({ columns: { site: 'site', response: 'y' }, trait: { name: 'y', unit: 'bushels' } }));
    const p = await problemsOf(() => readMappingFile(path));
    expect(brief(p)).toEqual([
      ['mapping-incomplete', 0, 'columns.treatment', null],
      ['mapping-incomplete', 0, 'columns.trial', null],
      ['unknown-unit', 0, 'trait.unit', 'bushels'],
    ]);
  });

  it('asks for the crop when yields are in bushels', async () => {
    const path = writeTemp('bu.json', JSON.stringify({ columns: { trial: 'env', treatment: 'trt', response: 'y' }, trait: { name: 'y', unit: 'bu/ac' } }));
    expect(brief(await problemsOf(() => readMappingFile(path)))).toEqual([['crop-unknown', 0, 'crop', null]]);
  });

  it('reports an unreadable file', async () => {
    expect(brief(await problemsOf(() => readMappingFile('/nonexistent/map.json')))).toEqual([['file-unreadable', 0, null, null]]);
  });
});
