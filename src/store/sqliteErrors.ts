// SQLite's own messages ("database is locked", "attempt to write a readonly database") name no
// file and say nothing about what to do. At the store's edge they become errors that name the
// workspace and the way out; anything else passes through unchanged.
import { ManyfieldError } from '../api/result.js';
import { WorkspaceRefusedError } from './errors.js';

function sqliteCode(e: unknown): string | null {
  const code = e instanceof Error ? (e as { code?: unknown }).code : undefined;
  return typeof code === 'string' && code.startsWith('SQLITE_') ? code : null;
}

/** The error to show for `e`, raised while working on the workspace at `path`. */
export function explainSqliteError(e: unknown, path: string): unknown {
  const code = sqliteCode(e);
  if (code === null) return e;
  if (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED'))
    return new ManyfieldError('conflict', `workspace "${path}" is busy: another Manyfield process is writing to it; nothing was changed — try again when that has finished`, { path, sqlite: code });
  if (code.startsWith('SQLITE_READONLY'))
    return new WorkspaceRefusedError('read-only', `workspace "${path}" is read-only (file or folder permissions, or a read-only disk), so nothing can be stored in it; nothing was changed — listing, export and "analyze --no-save" still work, or copy the file somewhere writable`, { path, sqlite: code });
  if (code === 'SQLITE_FULL')
    return new ManyfieldError('engine-failure', `the disk holding workspace "${path}" is full; nothing was changed — free some space and try again`, { path, sqlite: code });
  if (code.startsWith('SQLITE_CANTOPEN'))
    return new ManyfieldError('not-found', `cannot open workspace "${path}": the file or its folder cannot be opened (missing, a folder, or no permission); check the path and the folder's permissions`, { path, sqlite: code });
  if (code === 'SQLITE_NOTADB' || code.startsWith('SQLITE_CORRUPT'))
    return new WorkspaceRefusedError('not-a-workspace', `"${path}" is not a usable Manyfield workspace (${code === 'SQLITE_NOTADB' ? 'not an SQLite file' : 'the file is damaged'}); check the path, or restore it from a backup (*.bak-*) next to it`, { path, sqlite: code });
  if (code.startsWith('SQLITE_IOERR'))
    return new ManyfieldError('engine-failure', `reading or writing workspace "${path}" failed (disk error ${code}); nothing was changed — check the disk and try again`, { path, sqlite: code });
  return new ManyfieldError('engine-failure', `workspace "${path}": ${e instanceof Error ? e.message : String(e)} (${code})`, { path, sqlite: code });
}

/** Runs `f`, turning any SQLite error into one that names `path`. */
export function withWorkspaceErrors<T>(path: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    throw explainSqliteError(e, path);
  }
}
