// Migration 0002 and the plot-label store: an existing workspace is backed up and gains the
// plot label column, its controls' blank rates follow the stated rule (0), and plots are found
// by the field's own label beside the workspace id that excludePlot keeps taking.
import { readdirSync, rmSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { excludePlot, excludePlotByLabel, findPlotByLabel, importParsedTable, listPlots, loadNetwork, openWorkspace, readMigrations } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { copyMigrations, tempDirs } from './support/temp.js';

const newDir = tempDirs();

describe('migration 0002_plot_label', () => {
  it('backs up, adds plot.label, and sets the control\'s blank numeric levels to 0 (only those)', () => {
    const dir = newDir();
    const first = copyMigrations(path.join(dir, 'first-only'));
    // A workspace of the first schema only: every later migration is pending when it is reopened.
    for (const f of readdirSync(first)) if (!f.startsWith('0001_')) rmSync(path.join(first, f));
    const file = path.join(dir, 'old.manyfield');
    const old = openWorkspace(file, { create: true, migrationsDir: first });
    old.db.exec(`
      INSERT INTO protocol (id, name, control_code) VALUES (1, 'with control', 'CTL'), (2, 'no control', NULL);
      INSERT INTO factor (id, protocol_id, name, kind, unit, position) VALUES
        (1, 1, 'rate', 'numeric', 'kg/ha', 0), (2, 1, 'timing', 'categorical', NULL, 1), (3, 2, 'rate', 'numeric', 'kg/ha', 0);
      INSERT INTO treatment (id, protocol_id, code) VALUES (1, 1, 'CTL'), (2, 1, 'A1'), (3, 1, 'X0'), (4, 2, 'CTL');
      INSERT INTO treatment_level (treatment_id, factor_id, value_num, value_text) VALUES
        (1, 1, NULL, NULL), (1, 2, NULL, NULL), (2, 1, 40, NULL), (2, 2, NULL, 'early'), (3, 1, NULL, NULL), (3, 2, NULL, 'late'), (4, 3, NULL, NULL);
    `);
    expect(old.db.prepare("SELECT 1 FROM pragma_table_info('plot') WHERE name = 'label'").get()).toBeUndefined();
    old.close();

    const ws = openWorkspace(file);
    const backup = ws.migration.backup;
    try {
      expect(ws.migration.applied).toEqual(readMigrations().map((f) => f.version).filter((v) => v > 1));
      expect(ws.migration.backup).not.toBeNull();
      expect(ws.db.prepare("SELECT 1 FROM pragma_table_info('plot') WHERE name = 'label'").get()).toBeDefined();
      const level = (t: number, f: number) => ws.db.prepare('SELECT value_num, value_text FROM treatment_level WHERE treatment_id = ? AND factor_id = ?').get(t, f);
      expect(level(1, 1)).toEqual({ value_num: 0, value_text: null }); // the control's blank rate: 0
      expect(level(1, 2)).toEqual({ value_num: null, value_text: null }); // its timing stays not applicable
      expect(level(2, 1)).toEqual({ value_num: 40, value_text: null });
      expect(level(3, 1)).toEqual({ value_num: null, value_text: null }); // not the control: unchanged
      expect(level(4, 3)).toEqual({ value_num: null, value_text: null }); // a protocol without a control: unchanged
    } finally {
      ws.close();
    }
    // The backup opens at the old version, with the old blank level.
    const copy = openWorkspace(backup!, { readonly: true, migrationsDir: first });
    try {
      expect(copy.db.prepare('SELECT value_num FROM treatment_level WHERE treatment_id = 1 AND factor_id = 1').get()).toEqual({ value_num: null });
    } finally {
      copy.close();
    }
  });
});

describe('plots by the field\'s label', () => {
  it('imports labels, lists them, finds and excludes a plot by label; excludePlot by id still works', () => {
    const dir = newDir();
    const ws = openWorkspace(path.join(dir, 'w.manyfield'), { create: true });
    try {
      const table = syntheticTable({ trials: 2, seed: 3 });
      const labelled = { ...table, plots: table.plots.map((p, i) => ({ ...p, plotId: `P${100 + i}` })) };
      importParsedTable(ws, labelled);
      const trials = ws.db.prepare('SELECT id, label FROM trial ORDER BY id').all() as { id: number; label: string }[];
      const rows = listPlots(ws, trials[1].id);
      expect(rows[0].label).toBe(labelled.plots.find((p) => p.trialKey === trials[1].label)!.plotId);
      expect(rows[0].sourceRow).toBeGreaterThan(1);

      const id = findPlotByLabel(ws, trials[1].label, rows[2].label!);
      expect(id).toBe(rows[2].id);
      expect(excludePlotByLabel(ws, trials[1].label, rows[3].label!, 'hail')).toBe(rows[3].id);
      excludePlot(ws, rows[4].id, 'lodging');
      const after = listPlots(ws, trials[1].id);
      expect(after.filter((p) => p.excluded).map((p) => [p.label, p.exclusionReason])).toEqual([
        [rows[3].label, 'hail'],
        [rows[4].label, 'lodging'],
      ]);
      const plots = loadNetwork(ws, 'yield').trials.find((t) => t.trial === trials[1].label)!.plots;
      expect(plots.filter((p) => p.excluded).map((p) => p.label)).toEqual([rows[3].label, rows[4].label]);

      expect(() => findPlotByLabel(ws, trials[1].label, 'P9999')).toThrow(/has no plot labelled "P9999"; its plots are "P\d+"/);
      expect(() => findPlotByLabel(ws, `${trials[1].label}x`, 'P100')).toThrow(/no trial ".*x" in this workspace; the trials are .*did you mean/);
      expect(() => listPlots(ws, 9999)).toThrow(/no trial with id 9999/);
    } finally {
      ws.close();
    }
  });
});
