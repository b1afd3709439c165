// The Electron window's host: the preload's `window.manyfield` bridge (contextIsolation on; one
// function per handler, no raw IPC channel). Native dialogs choose files and workspaces.
import type { ManyfieldBridge } from '../../main/bridge.js';
import type { MenuCommand } from '../../main/channels.js';
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, Host, PickedFile, ProgressEvent, RecentWorkspace, Result } from './types.js';

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
  const id = `page-${++nextId}`;
  const abort = () => b.cancel(id);
  opts.signal?.addEventListener('abort', abort, { once: true });
  try {
    const progress = opts.onProgress ? (e: ProgressEvent) => opts.onProgress?.(e) : undefined;
    return (await b.api[name](args, id, progress)) as Result<HandlerResults[K]>;
  } catch (e) {
    return { ok: false, error: { code: 'internal', message: `the desktop shell did not answer ${name}: ${String(e)}` } };
  } finally {
    opts.signal?.removeEventListener('abort', abort);
  }
}

const host = () => bridge().host;

export const electronHost = {
  kind: 'electron',
  choosesFilesInPage: false,
  call,
  pickDataFile: async () => (await host().pickDataFile()) as PickedFile | null,
  uploadDataFile: (): Promise<PickedFile> => Promise.reject(new Error('the desktop window chooses files with its own dialog')),
  // The save dialog names a new workspace itself; the name typed in the page is not needed.
  pickWorkspace: async (mode: 'open' | 'new') => (await host().pickWorkspace(mode)) as string | null,
  recentWorkspaces: async () => (await host().recentWorkspaces()) as RecentWorkspace[],
  demoWorkspace: async () => (await host().demoWorkspace()) as string,
  // The window opens on the start screen; the recent list carries the last workspace.
  launchWorkspace: async () => null,
  saveFile: async (name: string, data: Blob | string) => {
    await host().saveFile(name, typeof data === 'string' ? data : new Uint8Array(await data.arrayBuffer()));
  },
  onMenu: (listener: (command: MenuCommand) => void) => bridge().onMenu(listener),
} satisfies Host;
