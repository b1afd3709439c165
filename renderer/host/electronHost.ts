// The Electron window's host: the preload's `window.manyfield` bridge (contextIsolation on; the
// bridge exposes named operations only, never a raw IPC channel). Native dialogs choose files.
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, Host, PickedFile, ProgressEvent, RecentWorkspace, Result } from './types.js';

/** What the preload exposes. Each call carries an id so progress and cancel reach the right call. */
export interface ManyfieldBridge {
  call(name: string, args: unknown, callId: string): Promise<unknown>;
  cancel(callId: string): void;
  onProgress(listener: (callId: string, event: ProgressEvent) => void): () => void;
  pickDataFile(): Promise<PickedFile | null>;
  pickWorkspace(mode: 'open' | 'new', name?: string): Promise<string | null>;
  recentWorkspaces(): Promise<RecentWorkspace[]>;
  demoWorkspace(): Promise<string>;
  launchWorkspace(): Promise<string | null>;
  saveFile(name: string, data: string | Uint8Array): Promise<void>;
}

declare global {
  interface Window {
    manyfield?: ManyfieldBridge;
  }
}

function bridge(): ManyfieldBridge {
  const b = window.manyfield;
  if (!b) throw new Error('the desktop bridge is missing (the preload did not run)');
  return b;
}

let nextId = 0;

async function call<K extends HandlerName>(name: K, args: HandlerArgs<K>, opts: CallOptions = {}): Promise<Result<HandlerResults[K]>> {
  const b = bridge();
  const id = `c${++nextId}`;
  const stop = opts.onProgress ? b.onProgress((callId, e) => callId === id && opts.onProgress?.(e)) : () => undefined;
  const abort = () => b.cancel(id);
  opts.signal?.addEventListener('abort', abort, { once: true });
  try {
    return (await b.call(name, args, id)) as Result<HandlerResults[K]>;
  } finally {
    stop();
    opts.signal?.removeEventListener('abort', abort);
  }
}

export const electronHost = {
  kind: 'electron',
  choosesFilesInPage: false,
  call,
  pickDataFile: () => bridge().pickDataFile(),
  uploadDataFile: (): Promise<PickedFile> => Promise.reject(new Error('the desktop window chooses files with its own dialog')),
  pickWorkspace: (mode: 'open' | 'new', name?: string) => bridge().pickWorkspace(mode, name),
  recentWorkspaces: () => bridge().recentWorkspaces(),
  demoWorkspace: () => bridge().demoWorkspace(),
  launchWorkspace: () => bridge().launchWorkspace(),
  saveFile: async (name: string, data: Blob | string) => bridge().saveFile(name, typeof data === 'string' ? data : new Uint8Array(await data.arrayBuffer())),
} satisfies Host;
