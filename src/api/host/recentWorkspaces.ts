// Recently opened workspaces, newest first, kept in a small JSON file by each shell (the
// Electron app in its user-data folder, the browser mode in its workspace folder).
import { existsSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { basename, extname } from 'node:path';

export interface RecentEntry {
  readonly path: string;
  readonly name: string;
  readonly openedAt: string;
}

export const MAX_RECENT = 10;

export function readRecent(file: string): RecentEntry[] {
  if (!existsSync(file)) return [];
  try {
    const data: unknown = JSON.parse(readFileSync(file, 'utf8'));
    if (!Array.isArray(data)) return [];
    return data.filter(
      (e): e is RecentEntry => e !== null && typeof e === 'object' && typeof e.path === 'string' && typeof e.name === 'string' && typeof e.openedAt === 'string',
    );
  } catch {
    return []; // a damaged list is forgotten, never fatal
  }
}

/** Records an opening; workspaces whose file is gone are dropped from the list. */
export function rememberRecent(file: string, path: string, name = basename(path, extname(path)), now = new Date()): RecentEntry[] {
  const list = [{ path, name, openedAt: now.toISOString() }, ...readRecent(file).filter((e) => e.path !== path && existsSync(e.path))].slice(0, MAX_RECENT);
  const tmp = `${file}.partial-${process.pid}`;
  writeFileSync(tmp, JSON.stringify(list, null, 2));
  renameSync(tmp, file);
  return list;
}
