// The browser mode's wire protocol, shared by the server and its tests (the page's client
// mirrors these names; it imports types only). Everything is on 127.0.0.1 and needs the
// per-launch token, checked before any routing.
import type { ProgressEvent } from '../api/context.js';
import type { Result } from '../api/result.js';

/** Query parameter carrying the token once, in the URL the server prints. */
export const TOKEN_QUERY = 'token';
/** Cookie the server sets after a page load with the token (HttpOnly, SameSite=Strict). */
export const TOKEN_COOKIE = 'mf_token';
/** Header a client may send instead of the cookie. */
export const TOKEN_HEADER = 'x-manyfield-token';

/** POST /api/call/<handler name>, body = the handler's JSON arguments. */
export const CALL_PREFIX = '/api/call/';
/** POST /api/upload?name=<file name>, body = the file's bytes. */
export const UPLOAD_PATH = '/api/upload';
export const MAX_UPLOAD_BYTES = 200 * 1024 * 1024;
/** Largest JSON body of a call. */
export const MAX_CALL_BYTES = 16 * 1024 * 1024;
/** Handlers take uploaded files as "upload:<id>"; the server maps the reference to its temporary copy. */
export const UPLOAD_REF_PREFIX = 'upload:';

/** Host endpoints (JSON Result bodies): what the Electron main process does with dialogs and menus. */
export const HOST_PATHS = {
  /** GET -> Result<SessionInfo> */
  session: '/api/host/session',
  /** GET -> Result<RecentWorkspace[]> */
  recent: '/api/host/recent',
  /** GET -> Result<WorkspaceFile[]>: the workspaces in the server's workspace folder (the "open" picker). */
  workspaces: '/api/host/workspaces',
  /** POST -> Result<{ path }>: builds the demo workspace in the folder on first use. */
  demo: '/api/host/demo',
  /** POST { mode: 'new', name } -> Result<{ path }>: a new empty workspace in the folder. */
  workspace: '/api/host/workspace',
} as const;

export const NDJSON_TYPE = 'application/x-ndjson';

/** One line of a call's response: zero or more progress lines, then exactly one result line. */
export type CallLine = { readonly progress: ProgressEvent } | { readonly result: Result<unknown> };

export interface SessionInfo {
  /** The workspace the server was started on. */
  readonly workspace: string;
  /** The folder where new workspaces and the demo are made, and the only place workspaces are accepted from. */
  readonly folder: string;
  readonly version: string;
}

export interface RecentWorkspace {
  readonly path: string;
  readonly name: string;
  /** ISO time. */
  readonly openedAt: string;
}

export interface WorkspaceFile {
  readonly path: string;
  readonly name: string;
}

export interface UploadReceipt {
  readonly ref: string;
  readonly name: string;
  readonly bytes: number;
}
