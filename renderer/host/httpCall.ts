// One handler call over the browser mode's wire protocol: POST the arguments, read NDJSON lines
// (progress events, then one result) as they stream in. Aborting the signal aborts the request,
// which the server turns into a cancel of the call. Kept free of DOM types so it runs in tests.
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, ProgressEvent, Result } from './types.js';
import { parseWireLine, splitNdjson } from './ndjson.js';

export type FetchLike = (url: string, init: { method: string; headers: Record<string, string>; body: string; signal?: AbortSignal; credentials?: 'same-origin' }) => Promise<Response>;

function failure<T>(code: 'cancelled' | 'internal', message: string): Result<T> {
  return { ok: false, error: { code, message } };
}

export async function callOverHttp<K extends HandlerName>(
  fetchImpl: FetchLike,
  headers: Record<string, string>,
  name: K,
  args: HandlerArgs<K>,
  opts: CallOptions = {},
): Promise<Result<HandlerResults[K]>> {
  const cancelled = () => failure<HandlerResults[K]>('cancelled', 'cancelled by the user; nothing was stored');
  let res: Response;
  try {
    res = await fetchImpl(`/api/call/${encodeURIComponent(name)}`, {
      method: 'POST',
      credentials: 'same-origin',
      headers: { ...headers, 'content-type': 'application/json' },
      body: JSON.stringify(args),
      signal: opts.signal,
    });
  } catch (e) {
    return opts.signal?.aborted ? cancelled() : failure('internal', `the server did not answer: ${String(e)}`);
  }
  if (!res.ok || !res.body) return failure('internal', `the server answered ${res.status} to ${name}`);
  const reader = res.body.getReader();
  const decoder = new TextDecoder();
  let pending = '';
  let result: Result<HandlerResults[K]> | null = null;
  try {
    for (;;) {
      const { value, done } = await reader.read();
      const split = splitNdjson(pending, done ? `${decoder.decode()}\n` : decoder.decode(value, { stream: true }));
      pending = split.rest;
      for (const line of split.lines) {
        const wire = parseWireLine(line);
        if ('progress' in wire) opts.onProgress?.(wire.progress as ProgressEvent);
        else result = wire.result as Result<HandlerResults[K]>;
      }
      if (done) break;
    }
  } catch (e) {
    return opts.signal?.aborted ? cancelled() : failure('internal', `the answer to ${name} was cut off: ${String(e)}`);
  }
  return result ?? failure('internal', `the server sent no result for ${name}`);
}
