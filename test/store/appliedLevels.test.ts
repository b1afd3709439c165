// Per-trial applied amounts (migration 0006): stored with the import, read back into each trial's
// appliedLevels, removed with the trials a --replace removes, and never at the cost of what is
// stored already when an import fails midway.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { ParsedPlotTable } from '../../src/intake/types.js';
import { importParsedTable, loadNetwork, openWorkspace, type Workspace } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();

/** The table with amounts applied in some of its trials (trial index -> code -> rate). */
function withAmounts(table: ParsedPlotTable, amounts: Record<number, Record<string, number>>): ParsedPlotTable {
  const trials = table.trials.map((t, i) => (amounts[i] ? { ...t, appliedLevels: Object.fromEntries(Object.entries(amounts[i]).map(([code, rate]) => [code, { rate }])) } : t));
  return { ...table, trials };
}

function storedAmounts(ws: Workspace): Record<string, unknown> {
  return Object.fromEntries(loadNetwork(ws, 'yield').trials.filter((t) => t.appliedLevels).map((t) => [t.trial, t.appliedLevels]));
}

function fileBytes(ws: Workspace, file: string): Buffer {
  ws.db.pragma('wal_checkpoint(TRUNCATE)');
  return readFileSync(file);
}

describe('amounts applied per trial', () => {
  it('are stored with the import and read back into the trials that have them', () => {
    const ws = openWorkspace(path.join(newDir(), 'w.manyfield'), { create: true });
    const table = withAmounts(syntheticTable({ trials: 3 }), { 1: { A1: 45, A2: 95 }, 2: { B4: 150 } });
    importParsedTable(ws, table);
    expect(storedAmounts(ws)).toEqual({ [table.trials[1].key]: { A1: { rate: 45 }, A2: { rate: 95 } }, [table.trials[2].key]: { B4: { rate: 150 } } });
    // The protocol keeps the level first seen.
    expect(loadNetwork(ws, 'yield').treatments.find((t) => t.code === 'A2')?.levels.rate).toBe(80);
    expect(ws.db.pragma('foreign_key_check')).toEqual([]);
    ws.close();
  });

  it('an import that fails midway (or a --replace that does) leaves the stored amounts and everything else as they were', () => {
    const file = path.join(newDir(), 'w.manyfield');
    const ws = openWorkspace(file, { create: true });
    const first = withAmounts(syntheticTable({ trials: 3, prefix: 'Keep' }), { 0: { A1: 45 } });
    importParsedTable(ws, first);
    const before = fileBytes(ws, file);
    const amounts = storedAmounts(ws);
    const stop = (done: number, total: number): void => {
      if (done === total) throw new Error('stopped at the last row');
    };
    // A new file with amounts of its own, stopped after its amounts and plots were written.
    const second = withAmounts(syntheticTable({ trials: 2, prefix: 'New' }), { 1: { B2: 77 } });
    expect(() => importParsedTable(ws, second, { onProgress: stop })).toThrow(/stopped at the last row/);
    // The same trials again with other amounts, replacing (which first deletes the stored ones).
    const again = withAmounts({ ...syntheticTable({ trials: 3, prefix: 'Keep', seed: 9 }) }, { 0: { A1: 55 }, 2: { A4: 170 } });
    expect(() => importParsedTable(ws, again, { replace: true, onProgress: stop })).toThrow(/stopped at the last row/);
    expect(fileBytes(ws, file).equals(before)).toBe(true);
    expect(storedAmounts(ws)).toEqual(amounts);
    expect(amounts).toEqual({ [first.trials[0].key]: { A1: { rate: 45 } } });
    ws.close();
  });

  it('a --replace removes the replaced trials\' amounts and stores the new ones', () => {
    const ws = openWorkspace(path.join(newDir(), 'w.manyfield'), { create: true });
    const first = withAmounts(syntheticTable({ trials: 3 }), { 0: { A1: 45 }, 1: { A2: 95 } });
    importParsedTable(ws, first);
    const again = withAmounts(syntheticTable({ trials: 3, seed: 9 }), { 1: { B1: 35 } });
    importParsedTable(ws, again, { replace: true });
    expect(storedAmounts(ws)).toEqual({ [again.trials[1].key]: { B1: { rate: 35 } } });
    expect(ws.db.prepare('SELECT COUNT(*) AS n FROM trial_applied_level').get()).toEqual({ n: 1 });
    expect(ws.db.pragma('foreign_key_check')).toEqual([]);
    ws.close();
  });
});
