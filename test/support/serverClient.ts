// A small client of the browser mode's wire protocol for tests: NDJSON calls with progress
// lines, uploads, and plain requests with or without the token.
import { request } from 'node:http';
import type { ProgressEvent } from '../../src/api/context.js';
import type { Result } from '../../src/api/result.js';
import { CALL_PREFIX, TOKEN_HEADER, UPLOAD_PATH, type CallLine, type UploadReceipt } from '../../src/server/protocol.js';

export interface CallOutcome {
  readonly progress: ProgressEvent[];
  readonly result: Result<unknown> | null;
  readonly lines: number;
}

export async function callApi(
  base: string,
  token: string,
  name: string,
  args: unknown,
  options: { signal?: AbortSignal; onProgress?: (e: ProgressEvent) => void } = {},
): Promise<CallOutcome> {
  const res = await fetch(`${base}${CALL_PREFIX}${name}`, {
    method: 'POST',
    headers: { [TOKEN_HEADER]: token, 'Content-Type': 'application/json' },
    body: JSON.stringify(args),
    signal: options.signal,
  });
  if (res.status !== 200) throw new Error(`HTTP ${res.status}`);
  const progress: ProgressEvent[] = [];
  let result: Result<unknown> | null = null;
  let lines = 0;
  let buffer = '';
  const decoder = new TextDecoder();
  for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
    buffer += decoder.decode(chunk, { stream: true });
    let nl: number;
    while ((nl = buffer.indexOf('\n')) >= 0) {
      const line = JSON.parse(buffer.slice(0, nl)) as CallLine;
      buffer = buffer.slice(nl + 1);
      lines++;
      if ('progress' in line) {
        progress.push(line.progress);
        options.onProgress?.(line.progress);
      } else result = line.result;
    }
  }
  return { progress, result, lines };
}

export async function upload(base: string, token: string, name: string, body: Buffer): Promise<UploadReceipt> {
  const res = await fetch(`${base}${UPLOAD_PATH}?name=${encodeURIComponent(name)}`, { method: 'POST', headers: { [TOKEN_HEADER]: token }, body });
  const r = (await res.json()) as Result<UploadReceipt>;
  if (!r.ok) throw new Error(r.error.message);
  return r.data;
}

/** A raw request (to set headers fetch will not, such as Host); resolves status, headers and body. */
export function rawRequest(port: number, path: string, headers: Record<string, string> = {}, method = 'GET'): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path, method, headers }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => (body += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.end();
  });
}
