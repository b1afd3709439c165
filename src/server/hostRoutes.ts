// /api/host/*: what the Electron main process does with dialogs, done the browser's way —
// the session, recent workspaces, the workspaces in the folder, the demo, a new workspace.
import { existsSync, readdirSync } from 'node:fs';
import type { IncomingMessage, ServerResponse } from 'node:http';
import { basename, extname, join } from 'node:path';
import { toApiError } from '../api/errors.js';
import { readRecent } from '../api/host/recentWorkspaces.js';
import { ManyfieldError, ok, type Result } from '../api/result.js';
import { runInWorker } from '../api/worker/runInWorker.js';
import { api } from '../api/handlers.js';
import { APP_VERSION } from '../version.js';
import { workspaceInFolder, WORKSPACE_EXTENSION } from './argsPolicy.js';
import type { ArgsPolicy } from '../api/host/argsPolicy.js';
import { readJsonBody, sendJson } from './httpBodies.js';
import { HOST_PATHS, type SessionInfo, type WorkspaceFile } from './protocol.js';

export interface HostState {
  readonly policy: ArgsPolicy;
  readonly folder: string;
  readonly workspace: string;
  readonly recentFile: string;
  readonly demoName: string;
  readonly workerFile?: string;
  readonly remember: (path: string) => void;
}

export async function handleHost(pathname: string, req: IncomingMessage, res: ServerResponse, state: HostState): Promise<void> {
  const known = (Object.values(HOST_PATHS) as string[]).includes(pathname);
  let result: Result<unknown>;
  try {
    result = await route(pathname, req, state);
  } catch (e) {
    result = { ok: false, error: toApiError(e) };
  }
  sendJson(res, known ? 200 : 404, result);
}

async function route(pathname: string, req: IncomingMessage, state: HostState): Promise<Result<unknown>> {
  const method = req.method ?? 'GET';
  if (pathname === HOST_PATHS.session && method === 'GET') return ok({ workspace: state.workspace, folder: state.folder, version: APP_VERSION } satisfies SessionInfo);
  if (pathname === HOST_PATHS.recent && method === 'GET') return ok(readRecent(state.recentFile).filter((e) => existsSync(e.path)));
  if (pathname === HOST_PATHS.workspaces && method === 'GET') return ok(workspacesIn(state.folder));
  if (pathname === HOST_PATHS.demo && method === 'POST') return demo(state);
  if (pathname === HOST_PATHS.workspace && method === 'POST') return newWorkspace(state, await readJsonBody(req, 64 * 1024));
  throw new ManyfieldError('not-found', `unknown host endpoint ${method} ${pathname}`);
}

function workspacesIn(folder: string): WorkspaceFile[] {
  return readdirSync(folder)
    .filter((f) => f.endsWith(WORKSPACE_EXTENSION))
    .sort()
    .map((f) => ({ path: join(folder, f), name: basename(f, extname(f)) }));
}

/** Demo builds in progress by path: a second request waits for the first instead of building beside it. */
const demoBuilds = new Map<string, Promise<Result<unknown>>>();

async function demo(state: HostState): Promise<Result<{ path: string }>> {
  const path = workspaceInFolder(state.folder, state.demoName);
  if (!existsSync(path)) {
    let building = demoBuilds.get(path);
    if (building === undefined) {
      building = runInWorker('demo.build', { workspace: path }, { workerFile: state.workerFile }).finally(() => demoBuilds.delete(path));
      demoBuilds.set(path, building);
    }
    const built = await building;
    if (!built.ok && !(built.error.code === 'conflict' && existsSync(path))) return built as Result<never>;
  }
  state.remember(path);
  return ok({ path });
}

async function newWorkspace(state: HostState, body: unknown): Promise<Result<{ path: string }>> {
  const b = body as { mode?: unknown; name?: unknown } | null;
  if (b === null || typeof b !== 'object' || b.mode !== 'new' || typeof b.name !== 'string' || !/^[\w][\w .-]{0,79}$/.test(b.name.trim()))
    throw new ManyfieldError('invalid-argument', 'give { mode: "new", name } with a plain name (letters, digits, spaces, . _ -; up to 80 characters)');
  const name = b.name.trim().endsWith(WORKSPACE_EXTENSION) ? b.name.trim() : `${b.name.trim()}${WORKSPACE_EXTENSION}`;
  const path = workspaceInFolder(state.folder, name);
  const created = await api['workspace.create']({ workspace: path });
  if (!created.ok) return created;
  state.remember(path);
  return ok({ path });
}
