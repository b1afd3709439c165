// The analysis, run off the caller's thread: the engine's loops are synchronous, so a caller
// whose own thread ran them could not even receive a cancel (Ctrl-C, the api's abort) until
// they finished. Here the caller stays free and ends this thread when asked (cancellable.ts).
import { parentPort, workerData } from 'node:worker_threads';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { toApiError } from '../errors.js';
import { runAnalysis } from './runAnalysis.js';
import { throttleProgress } from './progressThrottle.js';
import type { AnyAnalysisReport, ReportDetail } from './report.js';

export interface WorkerRequest {
  readonly network: NetworkInput;
  readonly spec: AnalysisSpec;
  readonly detail: ReportDetail;
}

export type WorkerMessage =
  | { readonly type: 'progress'; readonly event: { stage: string; step?: string; fraction: number | null } }
  | { readonly type: 'done'; readonly report: Omit<AnyAnalysisReport, 'provenance'> }
  | { readonly type: 'failed'; readonly error: ReturnType<typeof toApiError> };

const port = parentPort;
if (port !== null) {
  const { network, spec, detail } = workerData as WorkerRequest;
  const post = (m: WorkerMessage): void => port.postMessage(m);
  const onProgress = throttleProgress((event: { stage: string; step?: string; fraction: number | null }) => post({ type: 'progress', event }));
  try {
    post({ type: 'done', report: runAnalysis(network, spec, { onProgress }, detail) });
  } catch (e) {
    const error = toApiError(e);
    // Stack traces stay in this thread; the details must survive the copy to the caller.
    post({ type: 'failed', error: { code: error.code, message: error.message, details: cloneable(error.details) } });
  }
}

function cloneable(details: unknown): unknown {
  try {
    return structuredClone(details);
  } catch {
    return undefined;
  }
}
