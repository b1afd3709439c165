// Finding 3 of the new-user trial: spec errors. A misspelled moderator used to be ignored (every
// trial "left out for a missing moderator value", exit 0), a degree-4 trend said only "Invalid
// input", "DL" was refused for "dl", and a wrong control code listed no codes. Each now names the
// key, the value, what is allowed and the closest allowed value, before anything is fitted.
import { describe, expect, it, beforeAll } from 'vitest';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { nitrogenColumns, writeNitrogenCsv } from '../support/nitrogenNetwork.js';
import { analyzeJson, writeJson } from './support.js';

const BASE = {
  trait: 'yield',
  columns: nitrogenColumns(),
  control: 'CTL',
  contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }],
  oneStage: null,
  twoStage: { tau2: 'reml', interval: 'hksj' },
};

describe('spec problems name the key, the value, what is allowed and the closest', () => {
  const dir = tempDir();
  const data = join(dir, 'network.csv');
  beforeAll(() => writeNitrogenCsv(data));

  const refused = (spec: unknown): string => {
    const r = manyfield(['analyze', '--data', data, '--spec', writeJson(dir, `spec-${Math.random().toString(36).slice(2)}.json`, spec), '--json']);
    expect(r.status).toBe(1);
    expect(r.stdout).toBe('');
    return r.stderr;
  };

  it('a misspelled moderator is an error with the covariates that exist', () => {
    const e = refused({ ...BASE, moderators: ['rian'] });
    expect(e).toMatch(/spec\.moderators\[0\]: trial covariate "rian" is not in the data; the data have "rain"; did you mean "rain"\?/);
    // Spelled right, the meta-regression runs.
    const ok = analyzeJson(['--data', data, '--spec', writeJson(dir, 'mod-ok.json', { ...BASE, moderators: ['rain'] })]).report;
    expect(ok.warnings.some((w) => /missing moderator/i.test(w))).toBe(false);
  });

  it('a degree-4 trend says which degrees are allowed', () => {
    const e = refused({ ...BASE, contrasts: [...BASE.contrasts, { name: 'rate_quartic', trend: 'rate', degree: 4 }] });
    expect(e).toMatch(/spec\.contrasts\[1\]\.degree: 4 is not allowed; use 1, 2, 3/);
    expect(e).not.toMatch(/Invalid input/);
  });

  it('a misspelled key of a contrast is named with the keys allowed there', () => {
    const e = refused({ ...BASE, contrasts: [{ name: 'timing', factor: 'timing', level: ['early', 'late'] }] });
    expect(e).toMatch(/spec\.contrasts\[0\]\.level: unknown key "level"; the keys allowed here are "name", "factor", "levels"; did you mean "levels"\?/);
  });

  it('method names are matched in any case ("DL", "HKSJ"), and a wrong one lists the methods', () => {
    const r = analyzeJson(['--data', data, '--spec', writeJson(dir, 'dl.json', { ...BASE, twoStage: { tau2: 'DL', interval: 'HKSJ' } })]).report;
    expect(r.twoStage.pooled).toHaveLength(1);
    const e = refused({ ...BASE, twoStage: { tau2: 'DLL' } });
    expect(e).toMatch(/spec\.twoStage\.tau2: "DLL" is not allowed; use "reml", "ml", "dl", "pm", "fixed"; did you mean "dl"\?/);
  });

  it('a wrong control code lists the codes that exist (with --data and on a workspace)', () => {
    const e = refused({ ...BASE, control: 'CTRL' });
    expect(e).toMatch(/the control "CTRL" named in the spec never appears in the treatment column; the codes there are "\w+", .*"CTL".*; did you mean "CTL"\?/);
    const ws = join(dir, 'ws.manyfield');
    expect(manyfield(['import', '--workspace', ws, '--file', data, '--map', writeJson(dir, 'map.json', { columns: nitrogenColumns(), trait: { name: 'yield', unit: 't/ha' }, control: 'CTL' })]).status).toBe(0);
    const { columns: _c, ...inWorkspace } = BASE;
    const r = manyfield(['analyze', '--workspace', ws, '--spec', writeJson(dir, 'ctrl.json', { ...inWorkspace, control: 'CTRL' })]);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/spec\.control: treatment code "CTRL" is not in the data; the data have .*"CTL".*; did you mean "CTL"\?/);
  });

  it('unknown treatment codes, factors, levels and covariates are listed together', () => {
    const e = refused({
      ...BASE,
      contrasts: [
        { name: 'c', coefficients: { CTL: -1, A9: 1 } },
        { name: 'f', factor: 'timming', levels: ['early', 'late'] },
        { name: 'l', factor: 'timing', levels: ['early', 'lat'] },
        { name: 't', trend: 'timing', degree: 1 },
      ],
      oneStage: { covariates: ['rainn'], lrt: false },
    });
    expect(e).toMatch(/spec\.contrasts\[0\]\.coefficients: treatment code "A9" is not in the data/);
    expect(e).toMatch(/spec\.contrasts\[1\]\.factor: factor "timming" is not in the data; the data have "rate", "timing"; did you mean "timing"\?/);
    expect(e).toMatch(/spec\.contrasts\[2\]\.levels\[1\]: level of timing "lat" is not in the data; the data have "early", "late"; did you mean "late"\?/);
    expect(e).toMatch(/spec\.contrasts\[3\]\.trend: factor "timing" has levels that are not numbers/);
    expect(e).toMatch(/spec\.oneStage\.covariates\[0\]: trial covariate "rainn" is not in the data; the data have "rain"; did you mean "rain"\?/);
  });

  it('an unknown top-level key names the closest key', () => {
    expect(refused({ ...BASE, moderator: ['rain'] })).toMatch(/spec\.moderator: unknown key "moderator"; .*did you mean "moderators"\?/);
  });
});
