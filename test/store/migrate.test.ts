// The migration runner: fresh workspaces, upgrades with a backup, and the refusals.
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import {
  WorkspaceNotFoundError,
  WorkspaceRefusedError,
  counts,
  defaultMigrationsDir,
  getMeta,
  importParsedTable,
  migrationChecksum,
  openWorkspace,
  readMigrations,
  setMeta,
} from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { copyMigrations, tempDirs } from './support/temp.js';

const newDir = tempDirs();

function backupsIn(dir: string): string[] {
  return readdirSync(dir).filter((f) => /\.bak-\d{8}T\d{6}Z(-\d+)?$/.test(f));
}

function refusal(fn: () => unknown): WorkspaceRefusedError {
  try {
    fn();
  } catch (e) {
    if (e instanceof WorkspaceRefusedError) return e;
    throw e;
  }
  throw new Error('expected the workspace to be refused');
}

describe('fresh workspace', () => {
  it('applies every shipped migration, records checksums, sets the connection up, writes no backup', () => {
    const dir = newDir();
    const file = path.join(dir, 'w.manyfield');
    const ws = openWorkspace(file, { create: true });
    try {
      const shipped = readMigrations();
      expect(shipped.map((m) => m.version)).toContain(1);
      expect(ws.migration.applied).toEqual(shipped.map((m) => m.version));
      expect(ws.migration.backup).toBeNull();
      const history = ws.db.prepare('SELECT version, sha256 FROM schema_history ORDER BY version').all();
      expect(history).toEqual(shipped.map((m) => ({ version: m.version, sha256: migrationChecksum(readFileSync(path.join(defaultMigrationsDir(), m.file), 'utf8')) })));
      expect(ws.db.pragma('journal_mode', { simple: true })).toBe('wal');
      expect(ws.db.pragma('foreign_keys', { simple: true })).toBe(1);
      expect(ws.db.pragma('busy_timeout', { simple: true })).toBe(5000);
      const tables = (ws.db.prepare("SELECT name FROM sqlite_master WHERE type = 'table'").all() as { name: string }[]).map((t) => t.name);
      for (const t of ['site', 'site_covariate', 'protocol', 'factor', 'treatment', 'treatment_level', 'trial', 'plot', 'trait', 'observation', 'trial_covariate', 'import_batch', 'analysis', 'analysis_result', 'workspace_meta']) {
        expect(tables).toContain(t);
      }
    } finally {
      ws.close();
    }
    expect(backupsIn(dir)).toEqual([]);
    // Reopening has nothing to do.
    const again = openWorkspace(file);
    expect(again.migration).toEqual({ applied: [], backup: null });
    again.close();
    expect(backupsIn(dir)).toEqual([]);
  });

  it('refuses a missing file unless asked to create it, and creates nothing', () => {
    const file = path.join(newDir(), 'missing.manyfield');
    expect(() => openWorkspace(file)).toThrow(WorkspaceNotFoundError);
    expect(() => openWorkspace(file)).toThrow(/does not exist/);
    expect(existsSync(file)).toBe(false);
  });

  it('finds migrations/ at the repository root from the module location', () => {
    expect(path.resolve(defaultMigrationsDir())).toBe(path.resolve(import.meta.dirname, '../../migrations'));
  });
});

describe('upgrade of an older workspace', () => {
  it('backs the old file up first; the backup opens and holds the old content', () => {
    const dir = newDir();
    const oldMigrations = copyMigrations(path.join(dir, 'old'));
    const newMigrations = copyMigrations(path.join(dir, 'new'));
    writeFileSync(
      path.join(newMigrations, '0900_test_notes.sql'),
      "CREATE TABLE test_note (id INTEGER PRIMARY KEY, text TEXT NOT NULL);\nINSERT INTO workspace_meta (key, value_json) VALUES ('test.upgraded', 'true');\n",
    );
    const file = path.join(dir, 'w.manyfield');
    const old = openWorkspace(file, { create: true, migrationsDir: oldMigrations });
    importParsedTable(old, syntheticTable({ trials: 5 }));
    setMeta(old, 'note', { made: 'before the upgrade' });
    const before = counts(old);
    old.close();

    const upgraded = openWorkspace(file, { migrationsDir: newMigrations });
    try {
      expect(upgraded.migration.applied).toEqual([900]);
      const backup = upgraded.migration.backup;
      expect(backup).not.toBeNull();
      expect(path.dirname(backup!)).toBe(dir);
      expect(path.basename(backup!)).toMatch(/^w\.manyfield\.bak-\d{8}T\d{6}Z$/);
      expect(counts(upgraded)).toEqual(before);
      expect(getMeta(upgraded, 'test.upgraded')).toBe(true);
      expect(getMeta(upgraded, 'note')).toEqual({ made: 'before the upgrade' });

      // The backup is a complete workspace at the old version.
      const copy = openWorkspace(backup!, { readonly: true, migrationsDir: oldMigrations });
      try {
        expect(copy.migration.applied).toEqual([]);
        expect(counts(copy)).toEqual(before);
        expect(getMeta(copy, 'note')).toEqual({ made: 'before the upgrade' });
        expect(getMeta(copy, 'test.upgraded')).toBeUndefined();
        expect(copy.db.prepare("SELECT 1 FROM sqlite_master WHERE name = 'test_note'").get()).toBeUndefined();
        expect(copy.db.pragma('integrity_check', { simple: true })).toBe('ok');
      } finally {
        copy.close();
      }
    } finally {
      upgraded.close();
    }
    expect(backupsIn(dir)).toHaveLength(1);
  });

  it('applies a migration and its history row together: a failing migration leaves the workspace as it was', () => {
    const dir = newDir();
    const migrations = copyMigrations(dir);
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: migrations }).close();
    writeFileSync(path.join(migrations, '0901_broken.sql'), 'CREATE TABLE half_done (id INTEGER);\nINSERT INTO no_such_table VALUES (1);\n');
    expect(() => openWorkspace(file, { migrationsDir: migrations })).toThrow(/no_such_table/);
    const db = new Database(file, { readonly: true });
    try {
      expect(db.prepare("SELECT 1 FROM sqlite_master WHERE name = 'half_done'").get()).toBeUndefined();
      expect(db.prepare('SELECT MAX(version) AS v FROM schema_history').get()).toEqual({ v: Math.max(...readMigrations().map((m) => m.version)) });
    } finally {
      db.close();
    }
  });

  it('will not upgrade a workspace opened read-only', () => {
    const dir = newDir();
    const migrations = copyMigrations(dir);
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: migrations }).close();
    writeFileSync(path.join(migrations, '0902_more.sql'), 'CREATE TABLE more_things (id INTEGER);\n');
    const e = refusal(() => openWorkspace(file, { readonly: true, migrationsDir: migrations }));
    expect(e.reason).toBe('readonly-needs-upgrade');
    expect(e.message).toMatch(/open it once for writing/);
    expect(backupsIn(dir)).toEqual([]);
  });
});

describe('refusals', () => {
  it('refuses a workspace made by a newer Manyfield (unknown version) and changes nothing', () => {
    const dir = newDir();
    const newer = copyMigrations(path.join(dir, 'newer'));
    const ours = copyMigrations(path.join(dir, 'ours'));
    writeFileSync(path.join(newer, '0950_future.sql'), 'CREATE TABLE future_thing (id INTEGER);\n');
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: newer }).close();
    const bytes = readFileSync(file);
    const e = refusal(() => openWorkspace(file, { migrationsDir: ours }));
    expect(e.reason).toBe('newer-version');
    expect(e.code).toBe('workspace-refused');
    expect(e.message).toMatch(/upgrade Manyfield/);
    expect(e.message).toContain('950');
    expect(readFileSync(file).equals(bytes)).toBe(true);
    expect(backupsIn(dir)).toEqual([]);
  });

  it('refuses a workspace whose recorded checksum differs from the shipped migration (an edited migration)', () => {
    const dir = newDir();
    const migrations = copyMigrations(dir);
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: migrations }).close();
    const first = path.join(migrations, '0001_initial.sql');
    writeFileSync(first, readFileSync(first, 'utf8').replace('CREATE TABLE site (', 'CREATE TABLE site ( -- edited\n'));
    const e = refusal(() => openWorkspace(file, { migrationsDir: migrations }));
    expect(e.reason).toBe('edited-migration');
    expect(e.message).toMatch(/0001_initial\.sql/);
    expect(e.message).toMatch(/never be edited/);
  });

  it('treats a CRLF checkout of the same migration as unchanged', () => {
    const dir = newDir();
    const migrations = copyMigrations(dir);
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: migrations }).close();
    const first = path.join(migrations, '0001_initial.sql');
    writeFileSync(first, readFileSync(first, 'utf8').replace(/\n/g, '\r\n'));
    const ws = openWorkspace(file, { migrationsDir: migrations });
    expect(ws.migration.applied).toEqual([]);
    ws.close();
  });

  it('refuses an SQLite file that is not a workspace', () => {
    const file = path.join(newDir(), 'other.sqlite');
    const db = new Database(file);
    db.exec('CREATE TABLE customers (id INTEGER PRIMARY KEY, name TEXT)');
    db.close();
    const e = refusal(() => openWorkspace(file));
    expect(e.reason).toBe('not-a-workspace');
    expect(e.message).toMatch(/not a Manyfield workspace/);
  });

  it('refuses a file that is not SQLite at all (a CSV given as the workspace)', () => {
    const file = path.join(newDir(), 'plots.csv');
    writeFileSync(file, 'site,year,yield\nA,2020,5.1\n'.repeat(200));
    const bytes = readFileSync(file);
    const e = refusal(() => openWorkspace(file));
    expect(e.reason).toBe('not-a-workspace');
    expect(readFileSync(file).equals(bytes)).toBe(true);
  });

  it('refuses a history with a hole in it', () => {
    const dir = newDir();
    const migrations = copyMigrations(dir);
    writeFileSync(path.join(migrations, '0960_a.sql'), 'CREATE TABLE a960 (id INTEGER);\n');
    const file = path.join(dir, 'w.manyfield');
    openWorkspace(file, { create: true, migrationsDir: migrations }).close();
    writeFileSync(path.join(migrations, '0955_late_arrival.sql'), 'CREATE TABLE a955 (id INTEGER);\n');
    const e = refusal(() => openWorkspace(file, { migrationsDir: migrations }));
    expect(e.reason).toBe('history-gap');
  });
});
