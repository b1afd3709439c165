// The browser mode's host: the handler map over HTTP on 127.0.0.1 (NDJSON progress, then one
// result), files uploaded from an <input type=file>, exports saved as downloads.
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, Host, PickedFile, RecentWorkspace, Result } from './types.js';
import { callOverHttp } from './httpCall.js';

/** The launch token from the page address (the server also set it as a cookie). */
let token: string | null | undefined;
function launchToken(): string | null {
  if (token === undefined) token = typeof window === 'undefined' ? null : new URLSearchParams(window.location.search).get('token');
  return token;
}

function headers(extra: Record<string, string> = {}): Record<string, string> {
  const t = launchToken();
  return t ? { 'x-manyfield-token': t, ...extra } : extra;
}

async function getJson<T>(path: string, init: RequestInit = {}): Promise<T> {
  const res = await fetch(path, { credentials: 'same-origin', ...init, headers: headers(init.body ? { 'content-type': 'application/json' } : {}) });
  const body = (await res.json()) as unknown;
  if (!res.ok) throw new Error(`${path}: ${res.status} ${JSON.stringify(body).slice(0, 200)}`);
  // The host routes answer either the value itself or a Result wrapping it.
  if (body !== null && typeof body === 'object' && 'ok' in body) {
    const r = body as Result<T>;
    if (!r.ok) throw new Error(r.error.message);
    return r.data;
  }
  return body as T;
}

/** One handler over HTTP (see httpCall.ts), with the launch token. */
function call<K extends HandlerName>(name: K, args: HandlerArgs<K>, opts: CallOptions = {}): Promise<Result<HandlerResults[K]>> {
  return callOverHttp((url, init) => fetch(url, init), headers(), name, args, opts);
}

async function uploadDataFile(file: File): Promise<PickedFile> {
  const res = await fetch(`/api/upload?name=${encodeURIComponent(file.name)}`, {
    method: 'POST',
    credentials: 'same-origin',
    headers: headers({ 'content-type': 'application/octet-stream' }),
    body: file,
  });
  const body = (await res.json()) as Result<PickedFile>;
  if (!body.ok) throw new Error(body.error.message);
  return body.data;
}

/** A chooser opened from script, for callers that have no <input> of their own. */
function pickDataFile(): Promise<PickedFile | null> {
  return new Promise((resolve, reject) => {
    const input = document.createElement('input');
    input.type = 'file';
    input.accept = '.csv,.xlsx,text/csv';
    input.addEventListener('change', () => {
      const file = input.files?.[0];
      if (!file) resolve(null);
      else uploadDataFile(file).then(resolve, reject);
    });
    input.addEventListener('cancel', () => resolve(null));
    input.click();
  });
}

async function pickWorkspace(mode: 'open' | 'new', name?: string): Promise<string | null> {
  if (mode === 'open') return name && name.trim() ? name.trim() : null;
  if (!name || !name.trim()) return null;
  const r = await getJson<{ path: string }>('/api/host/workspace', { method: 'POST', body: JSON.stringify({ mode: 'new', name: name.trim() }) });
  return r.path;
}

async function saveFile(name: string, data: Blob | string): Promise<void> {
  const blob = typeof data === 'string' ? new Blob([data], { type: name.endsWith('.csv') ? 'text/csv' : name.endsWith('.html') ? 'text/html' : 'image/svg+xml' }) : data;
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

export const browserHost = {
  kind: 'browser',
  choosesFilesInPage: true,
  call,
  pickDataFile,
  uploadDataFile,
  pickWorkspace,
  recentWorkspaces: () => getJson<RecentWorkspace[]>('/api/host/recent'),
  demoWorkspace: async () => (await getJson<{ path: string }>('/api/host/demo', { method: 'POST', body: '{}' })).path,
  launchWorkspace: async () => (await getJson<{ workspace: string | null }>('/api/host/session')).workspace ?? null,
  saveFile,
} satisfies Host;
