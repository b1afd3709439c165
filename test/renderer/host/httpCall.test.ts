import { describe, expect, it } from 'vitest';
import { callOverHttp, type FetchLike } from '../../../renderer/host/httpCall.js';
import type { ProgressEvent } from '../../../renderer/host/types.js';

/** A response whose body arrives in the given chunks (cut anywhere, as a network may). */
function streamed(chunks: string[], status = 200): Response {
  const bytes = new TextEncoder();
  const body = new ReadableStream<Uint8Array>({
    start(controller) {
      for (const c of chunks) controller.enqueue(bytes.encode(c));
      controller.close();
    },
  });
  return new Response(body, { status, headers: { 'content-type': 'application/x-ndjson' } });
}

describe('handler calls over HTTP', () => {
  it('posts the arguments with the token and reads progress lines, then the result', async () => {
    const seen: { url: string; headers: Record<string, string>; body: string }[] = [];
    const fetchImpl: FetchLike = async (url, init) => {
      seen.push({ url, headers: init.headers, body: init.body });
      return streamed(['{"progress":{"stage":"read","fraction":0.25}}\n{"progr', 'ess":{"stage":"store","fraction":1}}\n{"result":{"ok":true,"data":{"valid":true,"prob', 'lems":[]}}}']);
    };
    const events: ProgressEvent[] = [];
    const r = await callOverHttp(fetchImpl, { 'x-manyfield-token': 'T' }, 'sites.list', { workspace: 'w.manyfield' }, { onProgress: (e) => events.push(e) });
    expect(seen[0].url).toBe('/api/call/sites.list');
    expect(seen[0].headers['x-manyfield-token']).toBe('T');
    expect(JSON.parse(seen[0].body)).toEqual({ workspace: 'w.manyfield' });
    expect(events).toEqual([
      { stage: 'read', fraction: 0.25 },
      { stage: 'store', fraction: 1 },
    ]);
    expect(r).toEqual({ ok: true, data: { valid: true, problems: [] } });
  });

  it('passes a refusal through as a value', async () => {
    const r = await callOverHttp(async () => streamed(['{"result":{"ok":false,"error":{"code":"not-found","message":"no trial 9"}}}\n']), {}, 'trial.detail', { workspace: 'w', trial: 9, trait: 'yield' });
    expect(r).toEqual({ ok: false, error: { code: 'not-found', message: 'no trial 9' } });
  });

  it('turns an aborted request into a cancelled result', async () => {
    const controller = new AbortController();
    const fetchImpl: FetchLike = (_url, init) =>
      new Promise((_resolve, reject) => init.signal?.addEventListener('abort', () => reject(new DOMException('aborted', 'AbortError'))));
    const pending = callOverHttp(fetchImpl, {}, 'data.import', { workspace: 'w', file: 'upload:1', mapping: { columns: {} } }, { signal: controller.signal });
    controller.abort();
    const r = await pending;
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.code).toBe('cancelled');
  });

  it('says so when the server answers an error status or no result', async () => {
    const r401 = await callOverHttp(async () => new Response('no', { status: 401 }), {}, 'sites.list', { workspace: 'w' });
    expect(!r401.ok && r401.error.message).toMatch(/401/);
    const none = await callOverHttp(async () => streamed(['{"progress":{"stage":"read","fraction":0}}\n']), {}, 'sites.list', { workspace: 'w' });
    expect(!none.ok && none.error.message).toMatch(/no result/);
  });
});
