// Worker-thread entry: runs one handler of the map with a progress sink and a cancel signal,
// then posts its Result. The shell starts one worker per long job.
import { parentPort } from 'node:worker_threads';
import { callHandler } from '../handlers.js';
import type { CallContext, ProgressEvent } from '../context.js';
import type { FromWorker, ToWorker } from './messages.js';

const port = parentPort;
if (port === null) throw new Error('jobWorker must run in a worker thread');

const controller = new AbortController();
let cancelFlag: Int32Array | null = null;

function post(message: FromWorker): void {
  port!.postMessage(message);
}

/** The shared flag is read at every progress report, where a synchronous store loop can still stop. */
function checkFlag(): void {
  if (cancelFlag !== null && Atomics.load(cancelFlag, 0) === 1 && !controller.signal.aborted) controller.abort();
}

port.on('message', (message: ToWorker) => {
  if (message.type === 'cancel') {
    controller.abort();
    return;
  }
  cancelFlag = new Int32Array(message.cancelFlag);
  const ctx: CallContext = {
    signal: controller.signal,
    onProgress: (event: ProgressEvent) => {
      post({ type: 'progress', event });
      checkFlag();
    },
  };
  void callHandler(message.name, message.args, ctx).then((result) => {
    post({ type: 'result', result });
    port!.close();
  });
});
