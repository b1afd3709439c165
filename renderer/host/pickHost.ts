// The screens never ask which shell they run in; only this picks the host once at start.
import type { Host } from './types.js';
import { browserHost } from './browserHost.js';
import { electronHost } from './electronHost.js';

export function pickHost(): Host {
  return globalThis.manyfield ? electronHost : browserHost;
}
