// `manyfield sites`, `exclude`, `include` and `exclusions` end to end on the demo workspace.
import { describe, expect, it, beforeAll } from 'vitest';
import { join } from 'node:path';
import { DEMO_SITES } from '../../src/demo/scenario.js';
import { manyfield, tempDir } from '../support/cli.js';

describe('sites and exclusions from the command line', () => {
  const ws = join(tempDir(), 'demo.manyfield');

  beforeAll(() => {
    expect(manyfield(['demo', '--workspace', ws]).status).toBe(0);
  });

  it('lists the sites as a table and as JSON', () => {
    const text = manyfield(['sites', '--workspace', ws]);
    expect(text.status).toBe(0);
    expect(text.stdout).toContain('soil_ph (pH)');
    expect(text.stdout).toMatch(/ASH\s+Ashby Flat\s+North\s+-33\.41\s+147\.12/);
    const json = JSON.parse(manyfield(['sites', '--workspace', ws, '--json']).stdout) as { code: string }[];
    expect(json.map((s) => s.code)).toEqual(DEMO_SITES.map((s) => s.code).sort());
  });

  it('excludes a plot with its reason, lists it, and includes it again', () => {
    const ex = manyfield(['exclude', '--workspace', ws, '--plot', '7', '--reason', 'sprayer skipped the plot']);
    expect(ex).toMatchObject({ status: 0, stdout: 'Plot 7 excluded: sprayer skipped the plot\n' });
    const list = JSON.parse(manyfield(['exclusions', '--workspace', ws, '--json']).stdout) as { plot: number; reason: string }[];
    expect(list).toMatchObject([{ plot: 7, reason: 'sprayer skipped the plot' }]);
    expect(manyfield(['include', '--workspace', ws, '--plot', '7']).status).toBe(0);
    expect(manyfield(['exclusions', '--workspace', ws]).stdout).toBe('No plots are excluded.\n');
  });

  it('refuses a missing reason, a bad plot id and undoing what is not excluded', () => {
    expect(manyfield(['exclude', '--workspace', ws, '--plot', '7']).status).toBe(2);
    const bad = manyfield(['exclude', '--workspace', ws, '--plot', 'seven', '--reason', 'x']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('--plot must be a plot id');
    const none = manyfield(['include', '--workspace', ws, '--plot', '7']);
    expect(none.status).toBe(1);
    expect(none.stderr).toContain('not excluded');
  });
});
