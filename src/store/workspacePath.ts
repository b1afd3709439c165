// Where a workspace really lives. A symbolic link is resolved once, up front, and the target is
// used from then on: SQLite names its -wal and -shm files after the target, and replacing or
// removing "the workspace" must act on the target, never on the link.
import { lstatSync, readlinkSync, statSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { ManyfieldError } from '../api/result.js';

const MAX_LINKS = 40; // as the kernel's own limit on nested links

/** The path a workspace path stands for: links followed (even to a file not yet created). */
export function resolveWorkspacePath(path: string): string {
  let current = resolve(path);
  for (let hops = 0; hops < MAX_LINKS; hops++) {
    let isLink: boolean;
    try {
      isLink = lstatSync(current).isSymbolicLink();
    } catch {
      return current; // nothing there yet: this is where it will be created
    }
    if (!isLink) return current;
    current = resolve(dirname(current), readlinkSync(current));
  }
  throw new ManyfieldError('invalid-argument', `workspace "${path}": too many symbolic links (a loop?); give the path of the file itself`, { path });
}

/** Refuses a folder given where a workspace file is expected, naming the path. */
export function refuseFolder(path: string, shown: string = path): void {
  let isDir = false;
  try {
    isDir = statSync(path).isDirectory();
  } catch {
    return;
  }
  if (isDir) throw new ManyfieldError('invalid-argument', `"${shown}" is a folder, not a workspace file; give the path of a workspace file (for example ${shown.replace(/[\\/]+$/, '')}/trials.manyfield)`, { path: shown });
}
