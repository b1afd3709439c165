// The commands on a network coded by level number with site-specific amounts (needs the build):
// `import` accepts it and warns once in words; `trials --trait` lists each trial's range at the
// amounts applied there; `analyze --workspace` pools the same numbers as `analyze --data` on the
// file (1e-12; the --data path's trends are checked against R lm in test/api/analysis).
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { SITE_AMOUNTS, SITE_AMOUNTS_COLUMNS, siteAmountsCsv } from '../support/siteAmountsNetwork.js';

interface Pooled {
  name: string;
  estimate: number;
  se: number;
  tau2: number;
  k: number;
}

describe('site-specific amounts through the commands', () => {
  it('import warns once, trials --trait shows the applied ranges, analyze --workspace equals analyze --data', () => {
    const dir = tempDir();
    const file = join(dir, 'amounts.csv');
    writeFileSync(file, siteAmountsCsv(8));
    writeFileSync(join(dir, 'map.json'), JSON.stringify({ columns: SITE_AMOUNTS_COLUMNS, trait: { name: 'y', unit: 't/ha' }, control: 'N0', factorUnits: { rate: 'kg/ha' } }));
    const ws = join(dir, 'w.manyfield');
    const imported = manyfield(['import', '--workspace', ws, '--file', file, '--map', join(dir, 'map.json')]);
    expect(imported.status).toBe(0);
    expect(imported.stderr.match(/manyfield: warning: treatments were applied at different amounts/g)).toHaveLength(1);
    expect(imported.stdout).not.toMatch(/to check/);

    const listed = manyfield(['trials', '--workspace', ws, '--trait', 'y']);
    expect(listed.status).toBe(0);
    expect(listed.stdout).toMatch(/Network checks for "y" \(9 trials with values\)/);
    expect(listed.stdout).toMatch(new RegExp(`S3-2022\\s+rate \\(kg/ha\\)\\s+0\\s+${SITE_AMOUNTS.S3[2]}\\s+4`));
    const json = JSON.parse(manyfield(['trials', '--workspace', ws, '--trait', 'y', '--json']).stdout) as { trials: unknown[]; checks: { disconnected: string[] } };
    expect(json.trials).toHaveLength(9);
    expect(json.checks.disconnected).toEqual([]);

    const contrasts = [
      { name: 'rate_linear', trend: 'rate', degree: 1 },
      { name: 'treated_vs_control', kind: 'treated-vs-control' },
      { name: 'early_vs_late', factor: 'timing', levels: ['early', 'late'] },
    ];
    writeFileSync(join(dir, 'ws.json'), JSON.stringify({ trait: 'y', control: 'N0', contrasts, oneStage: null }));
    writeFileSync(join(dir, 'data.json'), JSON.stringify({ trait: 'y', control: 'N0', contrasts, oneStage: null, columns: SITE_AMOUNTS_COLUMNS }));
    const fromWs = manyfield(['analyze', '--workspace', ws, '--spec', join(dir, 'ws.json'), '--json', '--no-save']);
    const fromFile = manyfield(['analyze', '--data', file, '--spec', join(dir, 'data.json'), '--json']);
    expect(fromWs.status).toBe(0);
    expect(fromFile.status).toBe(0);
    const a = (JSON.parse(fromWs.stdout) as { twoStage: { pooled: Pooled[] } }).twoStage.pooled;
    const b = (JSON.parse(fromFile.stdout) as { twoStage: { pooled: Pooled[] } }).twoStage.pooled;
    expect(a.map((p) => [p.name, p.k])).toEqual(b.map((p) => [p.name, p.k]));
    a.forEach((p, i) => {
      for (const key of ['estimate', 'se', 'tau2'] as const) expect(Math.abs(p[key] - b[i][key]), `${p.name} ${key}`).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(b[i][key])));
    });
  });
});
