// Runs the TypeScript job worker from the source tree (tests, `tsx` runs): registers tsx in the
// worker thread, then loads the entry. Built code uses dist/api/worker/jobWorker.js directly.
import { workerData } from 'node:worker_threads';
const { register } = await import('tsx/esm/api');
register();
await import(workerData.entry);
