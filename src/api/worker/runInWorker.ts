// Runs one handler in a fresh worker thread: progress events stream back to the caller, and
// aborting the caller's signal cancels the job (the handler rolls its transaction back and
// answers with a "cancelled" Result). The calling thread stays free meanwhile.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { ProgressEvent } from '../context.js';
import { fail, type Result } from '../result.js';
import type { FromWorker, ToWorker } from './messages.js';

export interface JobOptions {
  readonly onProgress?: (event: ProgressEvent) => void;
  readonly signal?: AbortSignal;
  /** The worker script; default: the bundled dist/main/jobWorker.cjs, else the compiled module, or the TypeScript source through tsx. */
  readonly workerFile?: string;
}

interface WorkerLaunch {
  readonly file: string | URL;
  readonly workerData?: unknown;
}

function defaultLaunch(): WorkerLaunch {
  const here = import.meta.url;
  if (here.endsWith('.ts')) return { file: new URL('./devBootstrap.mjs', here), workerData: { entry: new URL('./jobWorker.ts', here).href } };
  // The bundled worker (one file) starts in about 0.5 s; the compiled modules one by one take 1.5-2.5 s.
  const bundled = new URL('../../main/jobWorker.cjs', here);
  if (existsSync(fileURLToPath(bundled))) return { file: bundled };
  const compiled = new URL('./jobWorker.js', here);
  if (!existsSync(fileURLToPath(compiled))) throw new Error(`the job worker ${fileURLToPath(compiled)} is missing; run \`npm run build\``);
  return { file: compiled };
}

export function runInWorker(name: string, args: unknown, options: JobOptions = {}): Promise<Result<unknown>> {
  return new Promise((resolve) => {
    let launch: WorkerLaunch;
    try {
      launch = options.workerFile ? { file: options.workerFile } : defaultLaunch();
    } catch (e) {
      resolve(fail('internal', (e as Error).message));
      return;
    }
    const flag = new SharedArrayBuffer(4);
    const worker = new Worker(launch.file, { workerData: launch.workerData });
    let settled = false;
    const finish = (result: Result<unknown>): void => {
      if (settled) return;
      settled = true;
      options.signal?.removeEventListener('abort', cancel);
      resolve(result);
    };
    const cancel = (): void => {
      Atomics.store(new Int32Array(flag), 0, 1);
      worker.postMessage({ type: 'cancel' } satisfies ToWorker);
    };
    worker.on('message', (m: FromWorker) => {
      if (m.type === 'progress') options.onProgress?.(m.event);
      else finish(m.result);
    });
    worker.on('error', (e) => finish(fail('internal', `the background job failed: ${e.message}`)));
    worker.on('exit', (code) => finish(fail('internal', `the background job stopped (exit code ${code}) before answering`)));
    if (options.signal?.aborted) cancel();
    else options.signal?.addEventListener('abort', cancel, { once: true });
    worker.postMessage({ type: 'run', name, args, cancelFlag: flag } satisfies ToWorker);
  });
}
