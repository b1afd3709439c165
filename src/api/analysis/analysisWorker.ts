// The analysis, run off the caller's thread: the engine's loops are synchronous, so a caller
// whose own thread ran them could not even receive a cancel (Ctrl-C, the api's abort) until
// they finished. Here the caller stays free and ends this thread when asked (cancellable.ts).
// Given a file rather than a network, the worker reads it itself: copying a network of 100,000
// plots into the worker costs more than reading the file here.
import { parentPort, workerData } from 'node:worker_threads';
import type { IntakeProblem } from '../../intake/index.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { toApiError } from '../errors.js';
import { runAnalysis } from './runAnalysis.js';
import { throttleProgress } from './progressThrottle.js';
import { readAnalysisFile } from './readAnalysisFile.js';
import type { AnyAnalysisReport, ReportDetail } from './report.js';

export type WorkerRequest =
  | { readonly network: NetworkInput; readonly spec: AnalysisSpec; readonly detail: ReportDetail }
  | { readonly file: string; readonly spec: AnalysisSpec; readonly detail: ReportDetail };

/** What reading the file gave, when the worker read it. */
export interface WorkerRead {
  readonly sha256: string;
  readonly warnings: readonly IntakeProblem[];
}

export type WorkerMessage =
  | { readonly type: 'progress'; readonly event: { stage: string; step?: string; fraction: number | null } }
  | { readonly type: 'done'; readonly report: Omit<AnyAnalysisReport, 'provenance'>; readonly read?: WorkerRead }
  | { readonly type: 'failed'; readonly error: ReturnType<typeof toApiError> };

const port = parentPort;
if (port !== null) {
  const request = workerData as WorkerRequest;
  const post = (m: WorkerMessage): void => port.postMessage(m);
  const onProgress = throttleProgress((event: { stage: string; step?: string; fraction: number | null }) => post({ type: 'progress', event }));
  const fail = (e: unknown): void => {
    const error = toApiError(e);
    // Stack traces stay in this thread; the details must survive the copy to the caller.
    post({ type: 'failed', error: { code: error.code, message: error.message, details: cloneable(error.details) } });
  };
  const run = async (): Promise<void> => {
    if ('network' in request) {
      post({ type: 'done', report: runAnalysis(request.network, request.spec, { onProgress }, request.detail) });
      return;
    }
    const { network, sha256, warnings } = await readAnalysisFile(request.file, request.spec);
    post({ type: 'done', report: runAnalysis(network, request.spec, { onProgress }, request.detail), read: { sha256, warnings } });
  };
  run().catch(fail);
}

function cloneable(details: unknown): unknown {
  try {
    return structuredClone(details);
  } catch {
    return undefined;
  }
}
