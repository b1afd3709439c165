// POST /api/call/<name>: runs one handler and answers NDJSON — progress lines, then one result
// line. Long handlers run in a worker thread; the client closing the request cancels them.
import type { IncomingMessage, ServerResponse } from 'node:http';
import { callHandler, isHandlerName, LONG_HANDLERS } from '../api/handlers.js';
import type { ProgressEvent } from '../api/context.js';
import { toApiError } from '../api/errors.js';
import { ManyfieldError, type Result } from '../api/result.js';
import { runInWorker } from '../api/worker/runInWorker.js';
import { applyPolicy, type ArgsPolicy } from '../api/host/argsPolicy.js';
import { readJsonBody } from './httpBodies.js';
import { MAX_CALL_BYTES, NDJSON_TYPE, type CallLine } from './protocol.js';

export interface CallRouteOptions {
  readonly policy: ArgsPolicy;
  /** Worker script for long handlers (the default finds the compiled or source one). */
  readonly workerFile?: string;
  /** Called after a handler that may have opened a workspace succeeded (recent list). */
  readonly onWorkspaceUsed?: (path: string) => void;
  /** Rewrites an answer line before it is sent (the server hides its temporary upload paths). */
  readonly redact?: (line: string) => string;
}

export async function handleCall(name: string, req: IncomingMessage, res: ServerResponse, options: CallRouteOptions): Promise<void> {
  if (req.method !== 'POST') {
    res.writeHead(405, { Allow: 'POST' }).end();
    return;
  }
  const controller = new AbortController();
  // The client went away before the answer was complete: cancel the job.
  res.on('close', () => {
    if (!res.writableFinished) controller.abort();
  });
  res.writeHead(200, { 'Content-Type': NDJSON_TYPE, 'Cache-Control': 'no-store', 'X-Accel-Buffering': 'no' });
  const line = (l: CallLine): void => {
    if (!res.writableEnded && !res.destroyed) res.write(`${options.redact ? options.redact(JSON.stringify(l)) : JSON.stringify(l)}\n`);
  };
  let result: Result<unknown>;
  try {
    if (!isHandlerName(name)) throw new ManyfieldError('not-found', `no handler named "${name}"`);
    const args = applyPolicy(options.policy, await readJsonBody(req, MAX_CALL_BYTES));
    const onProgress = (event: ProgressEvent): void => line({ progress: event });
    result = LONG_HANDLERS.has(name)
      ? await runInWorker(name, args, { onProgress, signal: controller.signal, workerFile: options.workerFile })
      : await callHandler(name, args, { onProgress, signal: controller.signal });
    const used = (args as { workspace?: unknown } | null)?.workspace;
    if (result.ok && typeof used === 'string') options.onWorkspaceUsed?.(used);
  } catch (e) {
    result = { ok: false, error: toApiError(e) };
  }
  line({ result });
  res.end();
}
