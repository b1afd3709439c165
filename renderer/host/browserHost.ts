// The browser mode's host: the handler map over HTTP on 127.0.0.1 (NDJSON progress, then one
// result), files uploaded from an <input type=file>, exports saved as downloads.
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, Host, PickedFile, ProgressEvent, RecentWorkspace, Result } from './types.js';
import { parseWireLine, splitNdjson } from './ndjson.js';

/** The launch token from the page address (the server also set it as a cookie). */
function launchToken(): string | null {
  return new URLSearchParams(window.location.search).get('token');
}

const token = launchToken();

function headers(extra: Record<string, string> = {}): Record<string, string> {
  return token ? { 'x-manyfield-token': token, ...extra } : extra;
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

function cancelled<T>(): Result<T> {
  return { ok: false, error: { code: 'cancelled', message: 'cancelled by the user; nothing was stored' } };
}

async function call<K extends HandlerName>(name: K, args: HandlerArgs<K>, opts: CallOptions = {}): Promise<Result<HandlerResults[K]>> {
  let res: Response;
  try {
    res = await fetch(`/api/call/${encodeURIComponent(name)}`, {
      method: 'POST',
      credentials: 'same-origin',
      headers: headers({ 'content-type': 'application/json' }),
      body: JSON.stringify(args),
      signal: opts.signal,
    });
  } catch (e) {
    if (opts.signal?.aborted) return cancelled();
    return { ok: false, error: { code: 'internal', message: `the server did not answer: ${String(e)}` } };
  }
  if (!res.ok || !res.body) return { ok: false, error: { code: 'internal', message: `the server answered ${res.status} to ${name}` } };
  const reader = res.body.pipeThrough(new TextDecoderStream()).getReader();
  let pending = '';
  let result: Result<HandlerResults[K]> | null = null;
  try {
    for (;;) {
      const { value, done } = await reader.read();
      const split = splitNdjson(pending, done ? '\n' : value);
      pending = split.rest;
      for (const line of split.lines) {
        const wire = parseWireLine(line);
        if ('progress' in wire) opts.onProgress?.(wire.progress as ProgressEvent);
        else result = wire.result as Result<HandlerResults[K]>;
      }
      if (done) break;
    }
  } catch (e) {
    if (opts.signal?.aborted) return cancelled();
    return { ok: false, error: { code: 'internal', message: `the answer to ${name} was cut off: ${String(e)}` } };
  }
  return result ?? { ok: false, error: { code: 'internal', message: `the server sent no result for ${name}` } };
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
  const blob = typeof data === 'string' ? new Blob([data], { type: name.endsWith('.csv') ? 'text/csv' : 'image/svg+xml' }) : data;
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
