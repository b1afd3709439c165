// A migration proceeds only after its backup is verified (size, integrity, history). A backup
// that cannot be made — a full disk, a failing write — leaves the workspace as it was and no
// 0-byte file that the refusal messages would send users to (hardening, issue 20, finding 5).
import { copyFileSync, existsSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import Database from 'better-sqlite3';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { counts, importParsedTable, openWorkspace, readHistory, migrate, WorkspaceRefusedError } from '../../src/store/index.js';
import { backupProblem } from '../../src/store/backup.js';
import { canMountDisks, smallDisk } from '../support/tmpfs.js';
import { syntheticTable } from './support/syntheticTable.js';
import { copyMigrations, tempDirs } from './support/temp.js';

const newDir = tempDirs();

/** An old workspace (shipped migrations) and a migrations folder with one more, in `dir`. */
function oldWorkspace(dir: string, work = dir): { file: string; newMigrations: string } {
  const oldMigrations = copyMigrations(path.join(work, 'old'));
  const newMigrations = copyMigrations(path.join(work, 'new'));
  writeFileSync(path.join(newMigrations, '0900_test_notes.sql'), 'CREATE TABLE test_note (id INTEGER PRIMARY KEY, text TEXT NOT NULL);\n');
  const file = path.join(dir, 'w.manyfield');
  const ws = openWorkspace(file, { create: true, migrationsDir: oldMigrations });
  importParsedTable(ws, syntheticTable({ trials: 6 }));
  ws.close();
  return { file, newMigrations };
}

function refusal(fn: () => unknown): WorkspaceRefusedError {
  try {
    fn();
  } catch (e) {
    if (e instanceof WorkspaceRefusedError) return e;
    throw e;
  }
  throw new Error('expected a refusal');
}

const backups = (dir: string): string[] => readdirSync(dir).filter((f) => f.includes('.bak-'));

describe('the backup before a migration', () => {
  it('a backup written empty is refused, removed, and nothing is migrated', () => {
    const dir = newDir();
    const { file, newMigrations } = oldWorkspace(dir);
    const ws = openWorkspace(file, { readonly: true, migrationsDir: copyMigrations(path.join(dir, 'check')) });
    const before = counts(ws);
    ws.close();
    const db = new Database(file);
    try {
      const e = refusal(() => migrate(db, { migrationsDir: newMigrations, writeBackup: (_db, p) => writeFileSync(p, '') }));
      expect(e.reason).toBe('backup-failed');
      expect(e.message).toContain(`"${file}"`);
      expect(e.message).toMatch(/the backup file is empty\. Nothing was changed and no backup was kept/);
      expect(readHistory(db).map((h) => h.version)).not.toContain(900);
    } finally {
      db.close();
    }
    expect(backups(dir)).toEqual([]);
    const again = openWorkspace(file, { readonly: true, migrationsDir: copyMigrations(path.join(dir, 'check2')) });
    expect(counts(again)).toEqual(before);
    again.close();
  });

  it('a cut-off copy fails the check', () => {
    const dir = newDir();
    const { file } = oldWorkspace(dir);
    const cut = path.join(dir, 'cut.bak');
    copyFileSync(file, cut);
    writeFileSync(cut, Buffer.from(new Uint8Array(4096))); // a page of zeros: not SQLite
    expect(backupProblem(cut, 1)).toMatch(/cannot be read back|integrity/);
    expect(backupProblem(path.join(dir, 'none.bak'), 1)).toBe('the backup file was not written');
  });

  it.skipIf(!canMountDisks)('on a full disk the migration is refused and the workspace stays as it was (tmpfs; needs root)', () => {
    const disk = smallDisk(640 * 1024)!;
    try {
      const { file, newMigrations } = oldWorkspace(disk.dir, newDir());
      // Fill the disk so the backup (about the workspace's size) cannot fit.
      const size = statSync(file).size;
      const free = 640 * 1024 - size;
      try {
        writeFileSync(path.join(disk.dir, 'filler'), Buffer.alloc(Math.max(0, free - size / 2)));
      } catch {
        // the filler itself may hit the limit: the disk is full either way
      }
      const e = refusal(() => openWorkspace(file, { migrationsDir: newMigrations }));
      expect(e.reason).toBe('backup-failed');
      expect(backups(disk.dir)).toEqual([]);
      expect(existsSync(file)).toBe(true);
    } finally {
      disk.release();
    }
  });
});
