// Messages between a shell (server or Electron main) and the worker thread running one long
// handler. Cancellation also travels through a shared flag: a handler busy in a synchronous
// store transaction cannot read messages, but it checks the flag at every progress report.
import type { ProgressEvent } from '../context.js';
import type { Result } from '../result.js';

export interface RunMessage {
  readonly type: 'run';
  readonly name: string;
  readonly args: unknown;
  /** Int32Array over it: [0] becomes 1 when the caller cancels. */
  readonly cancelFlag: SharedArrayBuffer;
}

export interface CancelMessage {
  readonly type: 'cancel';
}

export type ToWorker = RunMessage | CancelMessage;

export type FromWorker = { readonly type: 'progress'; readonly event: ProgressEvent } | { readonly type: 'result'; readonly result: Result<unknown> };
