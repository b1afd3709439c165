// Migration 0006_applied_level on a workspace built before it: backed up first, nothing stored is
// changed (every row of every earlier table is the same), the trials load without amounts, and
// the upgraded workspace then takes a file with site-specific amounts.
import { readdirSync, rmSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { counts, importParsedTable, loadNetwork, openWorkspace, type Workspace } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { copyMigrations, tempDirs } from './support/temp.js';

const newDir = tempDirs();

/** Every row of every table but the migration history, as JSON, table by table. */
function contents(ws: Workspace, tables: readonly string[]): Record<string, string> {
  return Object.fromEntries(tables.map((t) => [t, JSON.stringify(ws.db.prepare(`SELECT * FROM "${t}" ORDER BY 1, 2`).all())]));
}

describe('migration 0006_applied_level', () => {
  it('upgrades a workspace built before it without changing what it holds', () => {
    const dir = newDir();
    const before6 = copyMigrations(path.join(dir, 'before-0006'));
    for (const f of readdirSync(before6)) if (Number(f.slice(0, 4)) >= 6) rmSync(path.join(before6, f));
    const file = path.join(dir, 'old.manyfield');
    const old = openWorkspace(file, { create: true, migrationsDir: before6 });
    expect(old.db.prepare("SELECT 1 FROM sqlite_master WHERE name = 'trial_applied_level'").get()).toBeUndefined();
    importParsedTable(old, syntheticTable({ trials: 4 }));
    const tables = (old.db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name <> 'schema_history'").all() as { name: string }[]).map((r) => r.name);
    expect(tables).toContain('plot');
    const rows = contents(old, tables);
    const held = counts(old);
    old.close();

    const ws = openWorkspace(file);
    try {
      expect(ws.migration.applied).toEqual([6]);
      expect(ws.migration.backup).not.toBeNull();
      expect(counts(ws)).toEqual(held);
      expect(contents(ws, tables)).toEqual(rows);
      expect(loadNetwork(ws, 'yield').trials.every((t) => t.appliedLevels === undefined)).toBe(true);
      expect(ws.db.prepare('SELECT COUNT(*) AS n FROM trial_applied_level').get()).toEqual({ n: 0 });
      const table = syntheticTable({ trials: 2, prefix: 'New' });
      importParsedTable(ws, { ...table, trials: table.trials.map((t, i) => (i === 1 ? { ...t, appliedLevels: { A4: { rate: 175 } } } : t)) });
      expect(loadNetwork(ws, 'yield').trials.find((t) => t.trial === table.trials[1].key)?.appliedLevels).toEqual({ A4: { rate: 175 } });
      expect(ws.db.pragma('integrity_check', { simple: true })).toBe('ok');
      expect(ws.db.pragma('foreign_key_check')).toEqual([]);
    } finally {
      ws.close();
    }
    // The backup is the workspace as it was, at the old schema.
    const copy = openWorkspace(path.join(dir, readdirSync(dir).find((f) => f.startsWith('old.manyfield.bak-'))!), { readonly: true, migrationsDir: before6 });
    try {
      expect(counts(copy)).toEqual(held);
      expect(copy.db.prepare("SELECT 1 FROM sqlite_master WHERE name = 'trial_applied_level'").get()).toBeUndefined();
    } finally {
      copy.close();
    }
  });
});
