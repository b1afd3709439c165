// Finding 2 of the new-user trial: the control's rate. A blank rate and a written 0 for the
// untreated control used to give different trends (the blank left the control out of them) and
// files mixing the two were refused with a message naming no file or row. Now one rule — the
// control received none of the input, so its rate is 0 unless the mapping says otherwise —
// applies on import and with --data, and each trend says which treatments and rates it used.
import { describe, expect, it, beforeAll } from 'vitest';
import { writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { nitrogenColumns, nitrogenMapping, writeNitrogenCsv } from '../support/nitrogenNetwork.js';
import { analyzeJson, pooledOf, writeJson, type Report } from './support.js';

const TRENDS = [
  { name: 'rate_linear', trend: 'rate', degree: 1 },
  { name: 'rate_quadratic', trend: 'rate', degree: 2 },
];
const SPEC = { trait: 'yield', control: 'CTL', contrasts: TRENDS, oneStage: null, twoStage: { tau2: 'reml', interval: 'hksj' } };

function trialEstimates(r: Report): number[] {
  return r.twoStage.trials.flatMap((t) => t.contrasts.map((c) => c.estimate ?? NaN));
}

describe('the control\'s rate: blank and 0 mean the same, on import and with --data', () => {
  const dir = tempDir();
  const zero = join(dir, 'control-zero.csv');
  const blank = join(dir, 'control-blank.csv');
  const map = writeJson(dir, 'map.json', nitrogenMapping());

  beforeAll(() => {
    writeNitrogenCsv(zero, { controlRate: '0' });
    writeNitrogenCsv(blank, { controlRate: '' });
  });

  it('--data: the same trend estimates, per trial and pooled, and the trend names its treatments and rates', () => {
    const a = analyzeJson(['--data', zero, '--spec', writeJson(dir, 'spec-data.json', { ...SPEC, columns: nitrogenColumns() })]).report;
    const b = analyzeJson(['--data', blank, '--spec', join(dir, 'spec-data.json')]).report;
    // Identical data after the rule, so identical numbers (exact up to 1e-12 relative).
    const ea = trialEstimates(a);
    const eb = trialEstimates(b);
    expect(ea.every(Number.isFinite)).toBe(true);
    eb.forEach((v, i) => expect(v).toBeCloseTo(ea[i], 12));
    for (const name of ['rate_linear', 'rate_quadratic']) expect(pooledOf(b, name).estimate).toBeCloseTo(pooledOf(a, name).estimate, 12);
    for (const r of [a, b]) {
      expect(pooledOf(r, 'rate_linear').meaning).toContain('trend over CTL, A1, B1, A2, B2, A4, B4 at rates 0, 40, 80, 160');
      expect(pooledOf(r, 'rate_linear').meaning).toContain('the untreated control CTL at rate 0: it received none of the input');
    }
  });

  it('import: files written either way go into one workspace, and give what --data gives', () => {
    const ws = join(dir, 'both.manyfield');
    const blankOtherSites = join(dir, 'blank-other-sites.csv');
    writeNitrogenCsv(blankOtherSites, { controlRate: '', sites: ['S5', 'S6'], seed: 3 });
    expect(manyfield(['import', '--workspace', ws, '--file', zero, '--map', map]).status).toBe(0);
    const second = manyfield(['import', '--workspace', ws, '--file', blankOtherSites, '--map', map]);
    expect(second.stderr).toBe('');
    expect(second.status).toBe(0);

    const only = join(dir, 'blank-only.manyfield');
    expect(manyfield(['import', '--workspace', only, '--file', blank, '--map', map]).status).toBe(0);
    const fromWs = analyzeJson(['--workspace', only, '--spec', writeJson(dir, 'spec-ws.json', SPEC), '--no-save']).report;
    const fromData = analyzeJson(['--data', zero, '--spec', join(dir, 'spec-data.json')]).report;
    // The workspace stores the rate in kg/ha (the file's unit), so the slopes agree to rounding.
    for (const name of ['rate_linear', 'rate_quadratic']) expect(pooledOf(fromWs, name).estimate).toBeCloseTo(pooledOf(fromData, name).estimate, 9);
    expect(pooledOf(fromWs, 'rate_linear').meaning).toMatch(/trend over CTL, A1, B1, A2, B2, A4, B4 at rates 0, 40, 80, 160 kg\/ha/);
  });

  it('a file that mixes blank and 0 for the control within itself is read as one level', () => {
    const lines = readFileSync(zero, 'utf8').split('\n');
    let flip = false;
    const mixed = lines.map((l) => {
      if (!l.includes(',CTL,0,')) return l;
      flip = !flip;
      return flip ? l.replace(',CTL,0,', ',CTL,,') : l;
    });
    const file = join(dir, 'mixed.csv');
    writeFileSync(file, mixed.join('\n'));
    const r = manyfield(['import', '--workspace', join(dir, 'mixed.manyfield'), '--file', file, '--map', map]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
  });

  it('controlLevels says otherwise: a blank control rate that is "not applicable" leaves the control out of the trend', () => {
    const spec = writeJson(dir, 'spec-na.json', SPEC);
    const ws = join(dir, 'na.manyfield');
    const m = writeJson(dir, 'map-na.json', nitrogenMapping({ controlLevels: { rate: null } }));
    expect(manyfield(['import', '--workspace', ws, '--file', blank, '--map', m]).status).toBe(0);
    const r = analyzeJson(['--workspace', ws, '--spec', spec, '--no-save']).report;
    expect(pooledOf(r, 'rate_linear').meaning).toMatch(/trend over A1, B1, A2, B2, A4, B4 at rates 40, 80, 160 kg\/ha \(the control CTL has no rate level/);
  });

  it('a treatment whose level contradicts the workspace is refused naming the file and the row', () => {
    const ws = join(dir, 'conflict.manyfield');
    expect(manyfield(['import', '--workspace', ws, '--file', zero, '--map', map]).status).toBe(0);
    const text = readFileSync(zero, 'utf8').replace(/S(\d),/g, 'T$1,').replace(/,A1,40,/g, ',A1,50,');
    const file = join(dir, 'a1-at-50.csv');
    writeFileSync(file, text);
    const firstA1 = text.split('\n').findIndex((l) => l.includes(',A1,50,')) + 1;
    const r = manyfield(['import', '--workspace', ws, '--file', file, '--map', map]);
    expect(r.status).toBe(1);
    expect(r.stderr).toContain(`${file}, row ${firstA1}: treatment "A1" has rate = 50 in the file but 40 in the workspace`);
  });
});
