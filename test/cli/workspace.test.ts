// The command end to end on the demo network: build, list, export, re-import, and a bad file
// that must change nothing.
import { describe, expect, it, beforeAll } from 'vitest';
import { readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';

interface Listing {
  id: number;
  site: string;
  year: number;
  design: string;
  plots: number;
  treatments: number;
  traits: string[];
}

describe('manyfield command on the demo workspace', () => {
  const dir = tempDir();
  const ws = join(dir, 'demo.manyfield');

  beforeAll(() => {
    const r = manyfield(['demo', '--workspace', ws]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
  });

  it('lists at least 36 trials from at least 12 sites and 3 years', () => {
    const r = manyfield(['trials', '--workspace', ws, '--json']);
    expect(r.status).toBe(0);
    const trials = JSON.parse(r.stdout) as Listing[];
    expect(trials.length).toBeGreaterThanOrEqual(36);
    expect(new Set(trials.map((t) => t.site)).size).toBeGreaterThanOrEqual(12);
    expect(new Set(trials.map((t) => t.year)).size).toBeGreaterThanOrEqual(3);
    for (const t of trials) {
      expect(Object.keys(t)).toEqual(expect.arrayContaining(['design', 'id', 'plots', 'site', 'traits', 'treatments', 'year']));
      expect(t.traits.sort()).toEqual(['protein', 'yield']);
    }
  });

  it('refuses to overwrite an existing workspace without --replace', () => {
    const r = manyfield(['demo', '--workspace', ws]);
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/already exists/);
  });

  it('a file with one bad value exits non-zero, names row 17 and the column, and changes nothing', () => {
    const before = manyfield(['trials', '--workspace', ws, '--json']).stdout;
    const header = 'site,year,block,trt,rate,timing,y';
    const codes: [string, number | '', string][] = [['CTL', 0, ''], ['A1', 40, 'early'], ['A2', 80, 'early'], ['A4', 160, 'early'], ['B1', 40, 'late'], ['B2', 80, 'late'], ['B4', 160, 'late']];
    const lines = [header];
    for (let b = 1; b <= 4; b++) for (const [c, r, t] of codes) lines.push(`NEWSITE,2026,${b},${c},${r},${t},${(5 + 0.1 * b + Number(r) / 100).toFixed(2)}`);
    // Row 17 as a spreadsheet numbers it: the header is row 1, so data line 16.
    const cells = lines[16].split(',');
    cells[6] = '"12,4x"';
    lines[16] = cells.join(',');
    const file = join(dir, 'bad.csv');
    writeFileSync(file, `${lines.join('\n')}\n`);
    const map = join(dir, 'map.json');
    writeFileSync(
      map,
      JSON.stringify({
        columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
        trait: { name: 'yield', unit: 't/ha' },
        control: 'CTL',
        factorUnits: { rate: 'kg/ha' },
        protocol: 'ON-N rate x timing',
      }),
    );
    const r = manyfield(['import', '--workspace', ws, '--file', file, '--map', map]);
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/row 17/);
    expect(r.stderr).toMatch(/"y"/);
    expect(r.stderr).toMatch(/12,4x/);
    expect(manyfield(['trials', '--workspace', ws, '--json']).stdout).toBe(before);
  });

  it('a failed import into a new path leaves no workspace behind', () => {
    const target = join(dir, 'never.manyfield');
    const file = join(dir, 'empty.csv');
    writeFileSync(file, '');
    const r = manyfield(['import', '--workspace', target, '--file', file, '--map', join(dir, 'map.json')]);
    expect(r.status).not.toBe(0);
    expect(existsSync(target)).toBe(false);
  });

  it('export then import into a fresh workspace round-trips the trait', () => {
    const out = join(dir, 'yield.csv');
    const e = manyfield(['export', '--workspace', ws, '--trait', 'yield', '--out', out]);
    expect(e.stderr).toBe('');
    expect(e.status).toBe(0);
    const header = readFileSync(out, 'utf8').split('\n')[0].split(',');
    expect(header).toEqual(expect.arrayContaining(['site', 'year', 'treatment', 'yield']));
    const map = join(dir, 'roundtrip-map.json');
    const has = (c: string) => header.includes(c);
    writeFileSync(
      map,
      JSON.stringify({
        columns: {
          site: 'site',
          year: 'year',
          ...(has('trial') ? { trial: 'trial' } : {}),
          ...(has('design') ? { design: 'design' } : {}),
          block: 'block',
          row: 'row',
          col: 'col',
          treatment: 'treatment',
          response: 'yield',
          factors: { rate: 'rate', timing: 'timing' },
        },
        trait: { name: 'yield', unit: 't/ha' },
        control: 'CTL',
        factorUnits: { rate: 'kg/ha' },
      }),
    );
    const ws2 = join(dir, 'copy.manyfield');
    const i = manyfield(['import', '--workspace', ws2, '--file', out, '--map', map]);
    expect(i.stderr).toBe('');
    expect(i.status).toBe(0);
    const original = (JSON.parse(manyfield(['trials', '--workspace', ws, '--json']).stdout) as Listing[]).map((t) => [t.site, t.year, t.design, t.plots, t.treatments]);
    const copy = (JSON.parse(manyfield(['trials', '--workspace', ws2, '--json']).stdout) as Listing[]).map((t) => [t.site, t.year, t.design, t.plots, t.treatments]);
    expect(copy.sort()).toEqual(original.sort());
    const again = manyfield(['export', '--workspace', ws2, '--trait', 'yield', '--out', join(dir, 'yield2.csv')]);
    expect(again.status).toBe(0);
    expect(readFileSync(join(dir, 'yield2.csv'), 'utf8').split('\n').length).toBe(readFileSync(out, 'utf8').split('\n').length);
  });
});
