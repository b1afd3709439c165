// A file whose treatment carries a site-specific amount in some trial is refused on import (the
// workspace does not store per-trial amounts yet), before anything is written, with what to do.
import { statSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importParsedTable, openWorkspace } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();

describe('import of per-trial applied amounts', () => {
  it('is refused naming the treatment, the amounts, the trial and the alternative; the workspace is unchanged', () => {
    const file = path.join(newDir(), 'w.manyfield');
    const ws = openWorkspace(file, { create: true });
    importParsedTable(ws, syntheticTable({ trials: 2, prefix: 'Keep' }));
    const table = syntheticTable({ trials: 2, prefix: 'New' });
    const code = table.treatments.find((t) => Object.values(t.levels).some((v) => typeof v === 'number'));
    expect(code).toBeDefined();
    const factor = Object.entries(code!.levels).find(([, v]) => typeof v === 'number')![0];
    const trials = table.trials.map((t, i) => (i === 1 ? { ...t, appliedLevels: { [code!.code]: { [factor]: 999 } } } : t));
    ws.db.pragma('wal_checkpoint(TRUNCATE)');
    const before = readFileSync(file);
    expect(() => importParsedTable(ws, { ...table, trials })).toThrow(
      new RegExp(`treatment "${code!.code}" has ${factor} .* and 999 in trial "${trials[1].key}".*A workspace cannot store per-trial amounts yet; nothing was imported.*analyze --data`),
    );
    ws.db.pragma('wal_checkpoint(TRUNCATE)');
    expect(readFileSync(file).equals(before)).toBe(true);
    expect(statSync(file).size).toBe(before.length);
    ws.close();
  });
});
