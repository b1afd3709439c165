// Site-specific amounts stored by `import` (migration 0006) give the same analysis as the file
// read directly (`analyze --data`, whose per-trial trends are checked against R lm in
// appliedLevels.test.ts): every number of the report — trial contrasts, pooling, one-stage model,
// rate curves and optimum — agrees to 1e-12, the warnings are the same, and the import says once,
// in words, that it stored the amounts per trial.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { importFile } from '../../../src/api/workspace/importFile.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { toCsv } from '../../../src/cli/csv.js';
import { exportTrait, loadNetwork, openWorkspace } from '../../../src/store/index.js';
import { SITE_AMOUNTS, SITE_AMOUNTS_COLUMNS, siteAmountsCsv } from '../../support/siteAmountsNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-stored-amounts-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const contrasts = [
  { name: 'rate_linear', trend: 'rate', degree: 1 },
  { name: 'rate_quadratic', trend: 'rate', degree: 2 },
  { name: 'treated_vs_control', kind: 'treated-vs-control' },
  { name: 'early_vs_late', factor: 'timing', levels: ['early', 'late'] },
];
const common = {
  trait: 'y',
  control: 'N0',
  contrasts,
  oneStage: { lrt: false, profile: false },
  rateResponse: { factor: 'rate', model: 'quadratic', priceRatio: 0.005, bootstrap: 0 },
};

/**
 * Leaves that differ by where the data came from, not by the analysis: the trait's unit (a file
 * read directly has none), a run's elapsed time, and a plot's name (the workspace id against the
 * file's plot label).
 */
const SOURCE_ONLY = /^report\.(contrastUnits\.|rateResponse\.(yieldUnit|unitNote)$|oneStage\.run\.elapsedMs$|twoStage\.trials\.\d+\.flags\.\d+\.plotId$)/;

/** Every leaf of a and b, paired by path: numbers within tol, everything else equal. */
function compareLeaves(a: unknown, b: unknown, path: string, tol: number, out: string[]): void {
  if (SOURCE_ONLY.test(path)) return;
  if (typeof a === 'number' && typeof b === 'number') {
    const ok = (Number.isNaN(a) && Number.isNaN(b)) || a === b || Math.abs(a - b) <= tol * Math.max(1, Math.abs(a));
    if (!ok) out.push(`${path}: ${a} vs ${b}`);
    return;
  }
  if (a !== null && b !== null && typeof a === 'object' && typeof b === 'object') {
    const keys = new Set([...Object.keys(a), ...Object.keys(b)]);
    for (const k of keys) compareLeaves((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`, tol, out);
    return;
  }
  if (a !== b) out.push(`${path}: ${JSON.stringify(a)} vs ${JSON.stringify(b)}`);
}

describe('amounts applied per trial, stored by import', () => {
  it('import + analyze --workspace equals analyze --data on the same file (1e-12), with one note on import', async () => {
    const file = join(dir, 'amounts.csv');
    writeFileSync(file, siteAmountsCsv(5));
    const workspace = join(dir, 'w.manyfield');
    const imported = await importFile({ workspace, file, mapping: { columns: SITE_AMOUNTS_COLUMNS, trait: { name: 'y', unit: 't/ha' }, control: 'N0' }, replace: false });
    // S2, S3 and S5 differ from S1's amounts (first seen) in both years; S4 does not.
    expect(imported.notes).toHaveLength(1);
    expect(imported.notes[0]).toMatch(/^treatments were applied at different amounts in 5 trials \(e\.g\. N1 is rate 50 in S2-2021 \(40 where first seen\);.*the amount applied in each trial is stored with it/);

    const fromWorkspace = await runAnalysisFromSource({ workspace, spec: analysisSpecSchema.parse(common), save: false });
    const fromFile = await runAnalysisFromSource({ data: file, spec: analysisSpecSchema.parse({ ...common, columns: SITE_AMOUNTS_COLUMNS }), save: false });

    // The same trials, with the same per-site amounts in their rate curves.
    expect(fromWorkspace.twoStage.trials.map((t) => t.trial)).toEqual(fromFile.twoStage.trials.map((t) => t.trial));
    const s3 = JSON.stringify(fromWorkspace.rateResponse?.trials.find((t) => t.trial.startsWith('S3')));
    expect(s3).toContain(String(SITE_AMOUNTS.S3[2]));

    const differences: string[] = [];
    const { provenance: _a, unit: _u1, ...w } = fromWorkspace;
    const { provenance: _b, unit: _u2, ...f } = fromFile;
    compareLeaves(w, f, 'report', 1e-12, differences);
    expect(differences).toEqual([]);
    expect(fromWorkspace.warnings.filter((x) => x.startsWith('treatments were applied at different amounts'))).toHaveLength(1);
    expect(fromWorkspace.agreement.find((a) => a.name === 'rate_linear')?.note).toMatch(/^not compared: treatments were applied at different rate amounts/);
  });

  it('export writes each trial\'s amounts, and importing the export stores the same amounts', async () => {
    const file = join(dir, 'amounts2.csv');
    writeFileSync(file, siteAmountsCsv(6));
    const first = join(dir, 'first.manyfield');
    await importFile({ workspace: first, file, mapping: { columns: SITE_AMOUNTS_COLUMNS, trait: { name: 'y', unit: 't/ha' }, control: 'N0' }, replace: false });
    const amountsIn = (workspace: string): Record<string, unknown> => {
      const ws = openWorkspace(workspace);
      try {
        return Object.fromEntries(loadNetwork(ws, 'y').trials.map((t) => [t.trial, t.appliedLevels ?? {}]));
      } finally {
        ws.close();
      }
    };
    const ws = openWorkspace(first);
    const exported = exportTrait(ws, 'y');
    ws.close();
    const out = join(dir, 'exported.csv');
    writeFileSync(out, toCsv(exported.header, exported.rows));
    const second = join(dir, 'second.manyfield');
    await importFile({ workspace: second, file: out, mapping: exported.mapping, replace: false });
    const stored = amountsIn(first);
    expect(Object.values(stored).filter((a) => Object.keys(a as object).length > 0)).toHaveLength(5);
    expect(amountsIn(second)).toEqual(stored);
  });
});
