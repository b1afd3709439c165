// Opening a workspace: one SQLite file in WAL mode with foreign keys enforced, migrated to the
// schema this build ships before anything else touches it.
import { existsSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { ManyfieldError } from '../api/result.js';
import { WorkspaceNotFoundError, WorkspaceRefusedError } from './errors.js';
import { migrate, type MigrateOutcome } from './migrate.js';

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
  ) {}

  get readonly(): boolean {
    return this.db.readonly;
  }

  close(): void {
    if (this.db.open) this.db.close();
  }
}

export function openWorkspace(path: string, options: OpenWorkspaceOptions = {}): Workspace {
  const readonly = options.readonly ?? false;
  if (readonly && options.create) throw new Error('a workspace cannot be created read-only');
  if (!existsSync(path)) {
    if (!options.create) throw new WorkspaceNotFoundError(path);
    const folder = dirname(resolve(path));
    if (!existsSync(folder)) throw new ManyfieldError('not-found', `cannot create workspace "${path}": the folder "${folder}" does not exist`, { path });
  }

  const db = new Database(path, { readonly, fileMustExist: !options.create });
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
    throw err;
  }
}
