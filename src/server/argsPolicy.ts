// Browser mode's policy: workspaces only as .manyfield files directly inside the server's
// workspace folder, data files only as upload references (mapped to the server's copies).
import { dirname, isAbsolute, join, resolve } from 'node:path';
import type { ArgsPolicy } from '../api/host/argsPolicy.js';
import { ManyfieldError } from '../api/result.js';
import type { UploadStore } from './uploads.js';

export const WORKSPACE_EXTENSION = '.manyfield';

/** The absolute path of a workspace inside the folder; refuses anything else. */
export function workspaceInFolder(folder: string, given: string): string {
  const base = resolve(folder);
  const path = isAbsolute(given) ? resolve(given) : resolve(base, given);
  if (dirname(path) !== base || !path.endsWith(WORKSPACE_EXTENSION) || path === join(base, WORKSPACE_EXTENSION))
    throw new ManyfieldError('invalid-argument', `in browser mode a workspace must be a ${WORKSPACE_EXTENSION} file in ${base}; "${given}" is not`, { workspace: given });
  return path;
}

export function folderPolicy(folder: string, uploads: UploadStore): ArgsPolicy {
  return {
    workspace: (given) => workspaceInFolder(folder, given),
    file: (key, given) => {
      const path = uploads.resolve(given);
      if (path === null) throw new ManyfieldError('invalid-argument', `in browser mode "${key}" must be an uploaded file reference (upload:<id>); upload the file first`, { [key]: given });
      return path;
    },
  };
}
