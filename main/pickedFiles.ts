// Electron's argument policy: the page may use only the workspaces and data files the user chose
// in a dialog (or the demo and recent list main handed it). Data files cross as "file:<id>"
// references, like the browser mode's uploads, so the page never handles a path it could forge.
import { randomUUID } from 'node:crypto';
import { basename, resolve } from 'node:path';
import type { ArgsPolicy } from '../src/api/host/argsPolicy.js';
import { ManyfieldError } from '../src/api/result.js';

export const FILE_REF_PREFIX = 'file:';

export class PickedFiles implements ArgsPolicy {
  private readonly workspaces = new Set<string>();
  private readonly files = new Map<string, string>();

  allowWorkspace(path: string): string {
    const full = resolve(path);
    this.workspaces.add(full);
    return full;
  }

  addFile(path: string): { ref: string; name: string } {
    const id = randomUUID();
    this.files.set(id, resolve(path));
    return { ref: `${FILE_REF_PREFIX}${id}`, name: basename(path) };
  }

  workspace(given: string): string {
    const full = resolve(given);
    if (!this.workspaces.has(full)) throw new ManyfieldError('invalid-argument', `workspace "${given}" was not chosen in this window; open it from the File menu`, { workspace: given });
    return full;
  }

  file(key: string, given: string): string {
    const path = given.startsWith(FILE_REF_PREFIX) ? this.files.get(given.slice(FILE_REF_PREFIX.length)) : undefined;
    if (path === undefined) throw new ManyfieldError('invalid-argument', `"${key}" must be a file chosen with the file dialog`, { [key]: given });
    return path;
  }
}
