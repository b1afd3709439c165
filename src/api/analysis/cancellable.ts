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
import type { WorkerMessage, WorkerRead, WorkerRequest } from './analysisWorker.js';
import { readAnalysisFile } from './readAnalysisFile.js';
import { runAnalysis } from './runAnalysis.js';
import type { AnyAnalysisReport, ReportDetail } from './report.js';

type Report = Omit<AnyAnalysisReport, 'provenance'>;

const CANCELLED = 'cancelled by the user; nothing was stored';

/**
 * The worker's entry: the bundle's sibling (dist/cli/analysisWorker.cjs), the compiled module
 * (dist/api/analysis/analysisWorker.js), or the TypeScript source run through tsx (tests).
 */
function startWorker(request: WorkerRequest): Worker | null {
  for (const name of ['./analysisWorker.cjs', './analysisWorker.js']) {
    const file = fileURLToPath(new URL(name, import.meta.url));
    if (existsSync(file)) return new Worker(file, { workerData: request });
  }
  const source = new URL('./analysisWorker.ts', import.meta.url);
  if (!existsSync(fileURLToPath(source))) return null;
  // Running from the TypeScript source (tests): the worker registers tsx, then loads the module.
  const boot = `import('tsx/esm/api').then((m) => { m.register(); return import(${JSON.stringify(source.href)}); })`;
  return new Worker(boot, { eval: true, workerData: request });
}

export async function runAnalysisCancellable(network: NetworkInput, spec: AnalysisSpec, ctx?: CallContext, detail: ReportDetail = 'summary'): Promise<Report> {
  throwIfCancelled(ctx);
  const signal = ctx?.signal;
  const worker = signal ? startWorker({ network, spec, detail }) : null;
  // Nobody can cancel (no signal), or no worker file: run here.
  if (signal === undefined || worker === null) return runAnalysis(network, spec, ctx, detail);
  return (await awaitWorker(worker, signal, ctx)).report;
}

/** The analysis of a plot file (`analyze --data`), read where the analysis runs. */
export async function runFileAnalysisCancellable(file: string, spec: AnalysisSpec, ctx?: CallContext, detail: ReportDetail = 'summary'): Promise<{ report: Report } & WorkerRead> {
  throwIfCancelled(ctx);
  const signal = ctx?.signal;
  const worker = signal ? startWorker({ file, spec, detail }) : null;
  if (signal === undefined || worker === null) {
    const { network, sha256, warnings } = await readAnalysisFile(file, spec);
    return { report: runAnalysis(network, spec, ctx, detail), sha256, warnings };
  }
  const done = await awaitWorker(worker, signal, ctx);
  if (done.read === undefined) throw new ManyfieldError('internal', 'the analysis worker did not say what it read');
  return { report: done.report, ...done.read };
}

function awaitWorker(worker: Worker, signal: AbortSignal, ctx?: CallContext): Promise<{ report: Report; read?: WorkerRead }> {
  return new Promise((resolve, reject) => {
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
      else if (m.type === 'done') settle(() => resolve({ report: m.report, read: m.read }));
      else settle(() => reject(new ManyfieldError(m.error.code, m.error.message, m.error.details)));
    });
    worker.on('error', (e) => settle(() => reject(e)));
    worker.on('exit', (code) => settle(() => reject(new ManyfieldError('internal', `the analysis stopped unexpectedly (worker exit code ${code})`))));
    if (signal.aborted) onAbort();
  });
}
