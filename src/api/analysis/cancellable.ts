// Runs an analysis so that it can be stopped: in a worker thread the caller ends at once when
// its signal aborts (Ctrl-C in the command, the api's abort). Nothing is stored by the worker,
// so a stopped analysis leaves the workspace as it was.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import type { WorkerMessage, WorkerRequest } from './analysisWorker.js';
import { runAnalysis } from './runAnalysis.js';

type Report = ReturnType<typeof runAnalysis>;

const CANCELLED = 'cancelled by the user; nothing was stored';

/**
 * The worker's entry: the bundle's sibling (dist/cli/analysisWorker.cjs), the compiled module
 * (dist/api/analysis/analysisWorker.js), or the TypeScript source run through tsx (tests).
 */
function workerEntry(): { file: string; execArgv: string[] } | null {
  const candidates: [string, string[]][] = [
    ['./analysisWorker.cjs', []],
    ['./analysisWorker.js', []],
    ['./analysisWorker.ts', ['--import', 'tsx']],
  ];
  for (const [name, execArgv] of candidates) {
    const file = fileURLToPath(new URL(name, import.meta.url));
    if (existsSync(file)) return { file, execArgv };
  }
  return null;
}

export async function runAnalysisCancellable(network: NetworkInput, spec: AnalysisSpec, ctx?: CallContext): Promise<Report> {
  throwIfCancelled(ctx);
  const signal = ctx?.signal;
  const entry = signal ? workerEntry() : null;
  // Nobody can cancel (no signal), or no worker file: run here.
  if (signal === undefined || entry === null) return runAnalysis(network, spec, ctx);
  return new Promise<Report>((resolve, reject) => {
    const request: WorkerRequest = { network, spec };
    const worker = new Worker(entry.file, { workerData: request, execArgv: entry.execArgv });
    let settled = false;
    const settle = (f: () => void): void => {
      if (settled) return;
      settled = true;
      signal.removeEventListener('abort', onAbort);
      f();
    };
    const onAbort = (): void => {
      settle(() => reject(new ManyfieldError('cancelled', CANCELLED)));
      void worker.terminate();
    };
    signal.addEventListener('abort', onAbort);
    worker.on('message', (m: WorkerMessage) => {
      if (m.type === 'progress') ctx?.onProgress?.(m.event);
      else if (m.type === 'done') settle(() => resolve(m.report));
      else settle(() => reject(new ManyfieldError(m.error.code, m.error.message, m.error.details)));
    });
    worker.on('error', (e) => settle(() => reject(e)));
    worker.on('exit', (code) => settle(() => reject(new ManyfieldError('internal', `the analysis stopped unexpectedly (worker exit code ${code})`))));
    if (signal.aborted) onAbort();
  });
}
