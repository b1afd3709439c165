// The backup written before a migration, checked before the migration may proceed: the file
// must exist, be non-empty, pass SQLite's integrity check and hold the same migration history
// as the workspace. Otherwise it is removed (it is this run's own file) and nothing is migrated.
import { rmSync, statSync } from 'node:fs';
import Database from 'better-sqlite3';
import { WorkspaceRefusedError } from './errors.js';

function vacuumInto(db: Database.Database, path: string): void {
  // VACUUM INTO writes a consistent, compact copy (WAL content included) without a transaction.
  db.prepare('VACUUM INTO ?').run(path);
}

function historyCount(db: Database.Database): number {
  return (db.prepare('SELECT COUNT(*) AS n FROM schema_history').get() as { n: number }).n;
}

/** Why the backup at `path` cannot be trusted, or null when it can. */
export function backupProblem(path: string, expectedHistory: number): string | null {
  let size: number;
  try {
    size = statSync(path).size;
  } catch {
    return 'the backup file was not written';
  }
  if (size === 0) return 'the backup file is empty';
  let copy: Database.Database | null = null;
  try {
    copy = new Database(path, { readonly: true, fileMustExist: true });
    const check = copy.pragma('integrity_check', { simple: true });
    if (check !== 'ok') return `the backup fails SQLite's integrity check (${String(check)})`;
    if (historyCount(copy) !== expectedHistory) return 'the backup does not hold the workspace\'s migration history';
    return null;
  } catch (e) {
    return `the backup cannot be read back (${(e as Error).message})`;
  } finally {
    copy?.close();
  }
}

export function writeVerifiedBackup(
  db: Database.Database,
  path: string,
  pending: readonly { version: number }[],
  write: (db: Database.Database, path: string) => void = vacuumInto,
): void {
  let problem: string | null;
  try {
    write(db, path);
    problem = backupProblem(path, historyCount(db));
  } catch (e) {
    const code = (e as { code?: string }).code;
    problem = code === 'SQLITE_FULL' ? 'the disk is full' : `writing it failed (${(e as Error).message})`;
  }
  if (problem === null) return;
  rmSync(path, { force: true });
  throw new WorkspaceRefusedError(
    'backup-failed',
    `workspace "${db.name}" needs upgrading (migrations ${pending.map((p) => p.version).join(', ')}), but its backup "${path}" could not be made: ${problem}. Nothing was changed and no backup was kept — free some disk space (the backup needs about the workspace's size) and open it again`,
    { backup: path, problem },
  );
}
