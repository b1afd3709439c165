// What a page may name when it calls the handler map through a shell: each shell decides which
// workspaces and which data files a page may reach (the browser mode: its folder and uploads;
// Electron: what the user chose in a dialog). Paths typed by a page never reach the core.
import { ManyfieldError } from '../result.js';

export interface ArgsPolicy {
  /** The server-side path of a workspace the page may use; throws invalid-argument otherwise. */
  workspace(given: string): string;
  /** The server-side path behind a file reference the page was handed; throws invalid-argument otherwise. */
  file(key: string, given: string): string;
}

/** The arguments with workspace and file references replaced by real paths, or an invalid-argument error. */
export function applyPolicy(policy: ArgsPolicy, args: unknown): unknown {
  if (args === null || typeof args !== 'object' || Array.isArray(args)) return args; // the handler's schema answers
  const out: Record<string, unknown> = { ...(args as Record<string, unknown>) };
  if (typeof out.workspace === 'string') out.workspace = policy.workspace(out.workspace);
  for (const key of ['file', 'data'] as const) {
    if (out[key] === undefined) continue;
    if (typeof out[key] !== 'string') throw new ManyfieldError('invalid-argument', `"${key}" must be a file reference`, { [key]: out[key] });
    out[key] = policy.file(key, out[key]);
  }
  if (typeof out.mapping === 'string') throw new ManyfieldError('invalid-argument', 'the mapping must be given as an object here, not as a file path');
  return out;
}
