// A new workspace appears complete or not at all. It is built under a name only this process
// uses, beside the target, and then hard-linked to the target name, which fails if the name
// exists: creation is decided by the file system, atomically, not by an earlier "does it
// exist?" that another process may have answered the same way. A failure removes only the
// private file; a workspace another process created meanwhile is never touched.
import { linkSync, renameSync, rmSync, existsSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { dirname } from 'node:path';
import { ManyfieldError } from '../api/result.js';
import { openWorkspace, type Workspace } from './workspace.js';

export type CreateOutcome<T> = { readonly created: true; readonly result: T } | { readonly created: false };

/** The database file and the files SQLite keeps beside it. */
export function removeDatabaseFiles(path: string): void {
  for (const suffix of ['', '-wal', '-shm', '-journal']) rmSync(`${path}${suffix}`, { force: true });
}

/**
 * Builds a new workspace at `target` (a resolved path) with `fill`. Returns created: false,
 * having written nothing at `target`, when the name was taken before the build finished.
 */
export function createWorkspaceWith<T>(target: string, fill: (ws: Workspace) => T, options: { migrationsDir?: string } = {}): CreateOutcome<T> {
  const folder = dirname(target);
  if (!existsSync(folder)) throw new ManyfieldError('not-found', `cannot create workspace "${target}": the folder "${folder}" does not exist; create it first or choose another path`, { path: target });
  const building = `${target}.new-${process.pid}-${randomBytes(4).toString('hex')}`;
  try {
    const ws = openWorkspace(building, { create: true, migrationsDir: options.migrationsDir });
    let result: T;
    try {
      result = fill(ws);
    } finally {
      ws.close(); // the last connection: SQLite checkpoints and removes the -wal file
    }
    if (!publish(building, target)) return { created: false };
    return { created: true, result };
  } finally {
    removeDatabaseFiles(building);
  }
}

/** Gives `building` the name `target` unless that name exists; false when it did. */
function publish(building: string, target: string): boolean {
  try {
    linkSync(building, target);
    return true;
  } catch (e) {
    const code = (e as { code?: string }).code;
    if (code === 'EEXIST') return false;
    // A file system without hard links: the exists-then-rename fallback has a tiny window in
    // which a workspace created by another process could be replaced.
    if (code === 'EPERM' || code === 'ENOTSUP' || code === 'EOPNOTSUPP' || code === 'ENOSYS') {
      if (existsSync(target)) return false;
      renameSync(building, target);
      return true;
    }
    throw e;
  }
}
