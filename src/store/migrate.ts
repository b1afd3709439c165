// The migration runner: numbered SQL files applied in order, each together with its history
// row in one transaction. A history this build does not know (a newer Manyfield, an edited
// migration) is refused rather than guessed at, and an existing workspace is backed up first.
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type Database from 'better-sqlite3';
import { writeVerifiedBackup } from './backup.js';
import { WorkspaceRefusedError } from './errors.js';

export interface MigrationFile {
  readonly version: number;
  readonly name: string;
  readonly file: string;
  readonly sql: string;
  readonly sha256: string;
}

export interface AppliedMigration {
  readonly version: number;
  readonly name: string;
  readonly sha256: string;
  readonly appliedAt: string;
}

export interface MigrateOptions {
  /** Folder of NNNN_name.sql files; defaults to the repository's migrations/ (tests pass a copy). */
  readonly migrationsDir?: string;
  /** Clock for the backup name and history rows (tests pin it). */
  readonly now?: () => Date;
  /** Tests only: writes the backup file (default VACUUM INTO), to simulate a failing disk. */
  readonly writeBackup?: (db: Database.Database, path: string) => void;
}

export interface MigrateOutcome {
  readonly applied: readonly number[];
  /** Path of the backup written before migrating, or null (fresh workspace, nothing pending). */
  readonly backup: string | null;
}

const FILE_PATTERN = /^(\d{4})_([A-Za-z0-9_-]+)\.sql$/;

/** migrations/ at the repository root, found from this module: src/store/ and dist/store/ both sit two levels down. */
export function defaultMigrationsDir(): string {
  return fileURLToPath(new URL('../../migrations/', import.meta.url));
}

/** Line endings are normalised before hashing so a Windows checkout (CRLF) keeps the same checksum. */
export function migrationChecksum(sql: string): string {
  return createHash('sha256').update(sql.replace(/\r\n/g, '\n'), 'utf8').digest('hex');
}

export function readMigrations(dir: string = defaultMigrationsDir()): MigrationFile[] {
  if (!existsSync(dir)) throw new Error(`migrations folder "${dir}" not found; the installation is incomplete`);
  const files: MigrationFile[] = [];
  for (const entry of readdirSync(dir).sort()) {
    if (!entry.endsWith('.sql')) continue;
    const m = FILE_PATTERN.exec(entry);
    if (!m) throw new Error(`migration file "${entry}" must be named NNNN_name.sql`);
    const sql = readFileSync(path.join(dir, entry), 'utf8');
    const version = Number(m[1]);
    if (files.some((f) => f.version === version)) throw new Error(`two migration files share version ${version}`);
    files.push({ version, name: m[2], file: entry, sql, sha256: migrationChecksum(sql) });
  }
  return files.sort((a, b) => a.version - b.version);
}

function hasTable(db: Database.Database, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

export function readHistory(db: Database.Database): AppliedMigration[] {
  if (!hasTable(db, 'schema_history')) return [];
  const rows = db
    .prepare('SELECT version, name, sha256, applied_at AS appliedAt FROM schema_history ORDER BY version')
    .all() as AppliedMigration[];
  return rows;
}

/**
 * Compare the workspace's history with the files this build ships. Returns the pending files,
 * or throws WorkspaceRefusedError when the history cannot be trusted.
 */
export function pendingMigrations(db: Database.Database, files: readonly MigrationFile[]): MigrationFile[] {
  const where = db.name;
  if (!hasTable(db, 'schema_history')) {
    const other = db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' LIMIT 1").get() as
      | { name: string }
      | undefined;
    if (other) {
      throw new WorkspaceRefusedError(
        'not-a-workspace',
        `"${where}" is an SQLite file but not a Manyfield workspace (it has tables but no migration history); choose another file name`,
        { table: other.name },
      );
    }
  }
  const history = readHistory(db);
  const known = new Map(files.map((f) => [f.version, f]));
  for (const h of history) {
    const f = known.get(h.version);
    if (!f) {
      throw new WorkspaceRefusedError(
        'newer-version',
        `workspace "${where}" was upgraded by a newer Manyfield (schema version ${h.version} "${h.name}" is unknown to this one); upgrade Manyfield to open it`,
        { version: h.version, name: h.name, newestKnown: files.length ? files[files.length - 1].version : 0 },
      );
    }
    if (f.sha256 !== h.sha256) {
      throw new WorkspaceRefusedError(
        'edited-migration',
        `workspace "${where}" was built with a different version of migration ${f.file} than this installation ships (checksum ${h.sha256.slice(0, 12)}… recorded, ${f.sha256.slice(0, 12)}… found); reinstall this Manyfield release or use the release that created the workspace — migrations must never be edited after release`,
        { version: h.version, recorded: h.sha256, found: f.sha256 },
      );
    }
  }
  const done = new Set(history.map((h) => h.version));
  const newest = history.length ? history[history.length - 1].version : 0;
  const pending = files.filter((f) => !done.has(f.version));
  const gap = pending.find((f) => f.version < newest);
  if (gap) {
    throw new WorkspaceRefusedError(
      'history-gap',
      `workspace "${where}" skipped migration ${gap.file} although later ones were applied; its history is damaged — restore it from a backup (*.bak-*) next to it`,
      { missing: gap.version },
    );
  }
  return pending;
}

/** `<file>.bak-YYYYMMDDTHHMMSSZ`, with a counter if that name is taken (two upgrades in one second). */
export function backupPathFor(file: string, now: Date): string {
  const stamp = now.toISOString().replace(/[-:]/g, '').replace(/\.\d{3}Z$/, 'Z');
  let candidate = `${file}.bak-${stamp}`;
  for (let i = 2; existsSync(candidate); i++) candidate = `${file}.bak-${stamp}-${i}`;
  return candidate;
}

/** Apply every pending migration; back up an existing workspace first. */
export function migrate(db: Database.Database, options: MigrateOptions = {}): MigrateOutcome {
  const now = options.now ?? (() => new Date());
  const files = readMigrations(options.migrationsDir);
  const pending = pendingMigrations(db, files);
  if (pending.length === 0) return { applied: [], backup: null };
  if (db.readonly) {
    throw new WorkspaceRefusedError(
      'readonly-needs-upgrade',
      `workspace "${db.name}" needs upgrading (migrations ${pending.map((p) => p.version).join(', ')}) but was opened read-only; open it once for writing to upgrade it`,
    );
  }

  let backup: string | null = null;
  const existing = readHistory(db).length > 0;
  if (existing && !db.memory) {
    backup = backupPathFor(db.name, now());
    // Nothing is migrated unless the backup is complete and readable (a full disk must not
    // leave a 0-byte "backup" that the refusal messages would then send users to).
    writeVerifiedBackup(db, backup, pending, options.writeBackup);
  }

  db.exec(`CREATE TABLE IF NOT EXISTS schema_history (
    version    INTEGER PRIMARY KEY,
    name       TEXT NOT NULL,
    sha256     TEXT NOT NULL,
    applied_at TEXT NOT NULL
  )`);
  const isApplied = db.prepare('SELECT sha256 FROM schema_history WHERE version = ?');
  const record = db.prepare('INSERT INTO schema_history (version, name, sha256, applied_at) VALUES (?, ?, ?, ?)');
  const applied: number[] = [];
  for (const m of pending) {
    const step = db.transaction(() => {
      // Another process may have migrated meanwhile; the immediate lock makes this check exact.
      if (isApplied.get(m.version) !== undefined) return false;
      db.exec(m.sql);
      record.run(m.version, m.name, m.sha256, now().toISOString());
      return true;
    });
    if (step.immediate()) applied.push(m.version);
  }
  return { applied, backup };
}
