// The Electron window's host: the preload's `window.manyfield` bridge (contextIsolation on; the
// bridge sends each handler on its own IPC channel, no open-ended channel). Each call carries an
// id of the page's own, so its progress events and a cancel reach the right call. Native dialogs
// choose files and workspaces.
import type { ManyfieldBridge } from '../../main/bridge.js';
import type { CallOptions, HandlerArgs, HandlerName, HandlerResults, Host, PickedFile, RecentWorkspace, Result } from './types.js';

// The preload puts the bridge on the page's global object (window in the page).
declare global {
  // eslint-disable-next-line no-var -- a global declaration must use var
  var manyfield: ManyfieldBridge | undefined;
}

function bridge(): ManyfieldBridge {
  const b = globalThis.manyfield;
  if (!b) throw new Error('the desktop bridge is missing (the preload did not run)');
  return b;
}

let nextId = 0;

async function call<K extends HandlerName>(name: K, args: HandlerArgs<K>, opts: CallOptions = {}): Promise<Result<HandlerResults[K]>> {
  const b = bridge();
  const id = `page-${++nextId}`;
  const stop = opts.onProgress ? b.onProgress((callId, e) => callId === id && opts.onProgress?.(e)) : () => undefined;
  const abort = () => b.cancel(id);
  opts.signal?.addEventListener('abort', abort, { once: true });
  try {
    return (await b.call(name, args, id)) as Result<HandlerResults[K]>;
  } catch (e) {
    return { ok: false, error: { code: 'internal', message: `the desktop shell did not answer ${name}: ${String(e)}` } };
  } finally {
    stop();
    opts.signal?.removeEventListener('abort', abort);
  }
}

export const electronHost = {
  kind: 'electron',
  choosesFilesInPage: false,
  call,
  pickDataFile: async () => (await bridge().pickDataFile()) as PickedFile | null,
  uploadDataFile: (): Promise<PickedFile> => Promise.reject(new Error('the desktop window chooses files with its own dialog')),
  pickWorkspace: async (mode: 'open' | 'new', name?: string) => (await bridge().pickWorkspace(mode, name)) as string | null,
  recentWorkspaces: async () => (await bridge().recentWorkspaces()) as RecentWorkspace[],
  demoWorkspace: async () => (await bridge().demoWorkspace()) as string,
  launchWorkspace: async () => (await bridge().launchWorkspace()) as string | null,
  saveFile: async (name: string, data: Blob | string) => {
    await bridge().saveFile(name, typeof data === 'string' ? data : new Uint8Array(await data.arrayBuffer()));
  },
  printReport: async (html: string) => new Uint8Array((await bridge().printReport(html)) as Uint8Array),
  onMenu: (listener) => bridge().onMenu(listener),
} satisfies Host;
