// What the page may name in browser mode: workspaces only inside the server's workspace folder,
// data files only as upload references (mapped here to the server's temporary copies), and
// mappings only as objects. The page never reaches an arbitrary server path.
import { dirname, isAbsolute, join, relative, resolve } from 'node:path';
import { ManyfieldError } from '../api/result.js';
import type { UploadStore } from './uploads.js';

export interface ArgsPolicy {
  /** The folder holding the workspaces the page may use. */
  readonly folder: string;
  readonly uploads: UploadStore;
}

export const WORKSPACE_EXTENSION = '.manyfield';

/** The absolute path of a workspace inside the folder; refuses anything else. */
export function allowedWorkspace(policy: ArgsPolicy, given: string): string {
  const folder = resolve(policy.folder);
  const path = isAbsolute(given) ? resolve(given) : resolve(folder, given);
  const rel = relative(folder, path);
  if (dirname(path) !== folder || rel.startsWith('..') || !path.endsWith(WORKSPACE_EXTENSION))
    throw new ManyfieldError('invalid-argument', `in browser mode a workspace must be a ${WORKSPACE_EXTENSION} file in ${folder}; "${given}" is not`, { workspace: given });
  return path;
}

function uploadedFile(policy: ArgsPolicy, key: string, given: unknown): string {
  const path = typeof given === 'string' ? policy.uploads.resolve(given) : null;
  if (path === null) throw new ManyfieldError('invalid-argument', `in browser mode "${key}" must be an uploaded file reference (upload:<id>); upload the file first`, { [key]: given });
  return path;
}

/** The arguments with workspace and file references replaced by server paths, or an invalid-argument error. */
export function applyPolicy(policy: ArgsPolicy, args: unknown): unknown {
  if (args === null || typeof args !== 'object' || Array.isArray(args)) return args; // the handler's schema answers
  const out: Record<string, unknown> = { ...(args as Record<string, unknown>) };
  if ('workspace' in out && out.workspace !== undefined) {
    if (typeof out.workspace !== 'string') return out; // the schema answers
    out.workspace = allowedWorkspace(policy, out.workspace);
  }
  for (const key of ['file', 'data'] as const) if (key in out && out[key] !== undefined) out[key] = uploadedFile(policy, key, out[key]);
  if (typeof out.mapping === 'string') throw new ManyfieldError('invalid-argument', 'in browser mode the mapping must be given as an object, not a file path');
  return out;
}

export function workspaceIn(folder: string, name: string): string {
  return join(resolve(folder), name);
}
