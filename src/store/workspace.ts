// Opening a workspace: one SQLite file in WAL mode with foreign keys enforced, migrated to the
// schema this build ships before anything else touches it.
import { accessSync, constants, copyFileSync, existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { ManyfieldError } from '../api/result.js';
import { WorkspaceNotFoundError, WorkspaceRefusedError } from './errors.js';
import { migrate, type MigrateOutcome } from './migrate.js';
import { explainSqliteError } from './sqliteErrors.js';
import { refuseFolder } from './workspacePath.js';

export interface OpenWorkspaceOptions {
  /** Create the file when it does not exist (default false: a missing file is an error). */
  readonly create?: boolean;
  readonly readonly?: boolean;
  /** Tests only: a different migrations folder. */
  readonly migrationsDir?: string;
}

export class Workspace {
  constructor(
    readonly path: string,
    readonly db: Database.Database,
    /** What opening did: migrations applied and the backup written first, if any. */
    readonly migration: MigrateOutcome,
    /** Run after closing (removes the private snapshot of a workspace on a read-only disk). */
    private readonly afterClose?: () => void,
  ) {}

  get readonly(): boolean {
    return this.db.readonly;
  }

  close(): void {
    if (this.db.open) {
      this.db.close();
      this.afterClose?.();
    }
  }
}

export function openWorkspace(path: string, options: OpenWorkspaceOptions = {}): Workspace {
  const readonly = options.readonly ?? false;
  if (readonly && options.create) throw new Error('a workspace cannot be created read-only');
  refuseFolder(path);
  if (!existsSync(path)) {
    if (!options.create) throw new WorkspaceNotFoundError(path);
    const folder = dirname(resolve(path));
    if (!existsSync(folder)) throw new ManyfieldError('not-found', `cannot create workspace "${path}": the folder "${folder}" does not exist`, { path });
  }

  let db: Database.Database;
  try {
    db = new Database(path, { readonly, fileMustExist: !options.create });
  } catch (err) {
    throw explainSqliteError(err, path);
  }
  try {
    db.pragma('busy_timeout = 5000');
    if (!readonly) {
      db.pragma('journal_mode = WAL');
      // With WAL, NORMAL keeps every commit atomic and the file consistent after a crash or
      // kill; only the last commits before a power loss can be rolled back.
      db.pragma('synchronous = NORMAL');
    }
    db.pragma('foreign_keys = ON');
    db.pragma('temp_store = MEMORY');
    db.pragma('cache_size = -65536'); // 64 MiB: bulk imports touch many index pages
    const migration = migrate(db, { migrationsDir: options.migrationsDir });
    return new Workspace(path, db, migration);
  } catch (err) {
    db.close();
    if (err instanceof Error && (err as { code?: string }).code === 'SQLITE_NOTADB') {
      throw new WorkspaceRefusedError('not-a-workspace', `"${path}" is not a Manyfield workspace (not an SQLite file); check the path`, { path });
    }
    throw explainSqliteError(err, path);
  }
}

/** Whether this process may write the file (and create its -wal and -shm files beside it). */
function writable(path: string): boolean {
  try {
    accessSync(path, constants.W_OK);
    accessSync(dirname(resolve(path)), constants.W_OK);
    return true;
  } catch {
    return false;
  }
}

/**
 * Opens a workspace to read from it (listing, export, an analysis not stored): read-write when
 * the file can be written, so an older workspace is still upgraded as before; read-only when it
 * cannot (permissions, a read-only disk), instead of failing on SQLite's first write.
 */
export function openWorkspaceForReading(path: string, options: Pick<OpenWorkspaceOptions, 'migrationsDir'> = {}): Workspace {
  refuseFolder(path);
  if (!existsSync(path)) throw new WorkspaceNotFoundError(path);
  if (writable(path)) return openWorkspace(path, options);
  try {
    return openWorkspace(path, { ...options, readonly: true });
  } catch (e) {
    if (!(e instanceof ManyfieldError && e.code === 'not-found')) throw e;
  }
  // SQLite cannot open a WAL workspace read-only where it cannot create the -shm file beside it
  // (a read-only disk): read a private snapshot instead, removed again on close.
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-readonly-'));
  const copy = join(dir, 'snapshot.manyfield');
  const removeCopy = (): void => rmSync(dir, { recursive: true, force: true });
  try {
    copyFileSync(path, copy);
    if (existsSync(`${path}-wal`)) copyFileSync(`${path}-wal`, `${copy}-wal`);
    const snapshot = openWorkspace(copy, { ...options, readonly: true });
    return new Workspace(path, snapshot.db, snapshot.migration, removeCopy);
  } catch (e) {
    removeCopy();
    throw e;
  }
}
