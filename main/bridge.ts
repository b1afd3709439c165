// What the preload exposes to the page as window.manyfield (the shape renderer/host/electronHost.ts
// uses): call a handler by name, cancel, progress, the host actions and menu commands. Pure (it
// takes an ipcRenderer-like object), so the exposed surface is tested without Electron. `call`
// is not an open channel: it accepts only the map's handler names and sends each on that
// handler's own IPC channel, the only channels main listens on. A sandboxed preload may require
// nothing but "electron", so this file imports only the handler names and channel names.
import { HANDLER_NAMES, type HandlerNameList } from '../src/api/handlerNames.js';
import { callChannel, CANCEL_CHANNEL, hostChannel, MENU_CHANNEL, PROGRESS_CHANNEL, type HostAction, type MenuCommand, type ProgressMessage } from './channels.js';

export interface IpcRendererLike {
  invoke(channel: string, ...args: unknown[]): Promise<unknown>;
  send(channel: string, ...args: unknown[]): void;
  on(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
  removeListener(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
}

type ProgressListener = (callId: string, event: ProgressMessage['event']) => void;

export interface ManyfieldBridge {
  /** Resolves the handler's Result (a refusal is a Result, never a rejection). */
  call(name: string, args: unknown, callId: string): Promise<unknown>;
  cancel(callId: string): void;
  onProgress(listener: ProgressListener): () => void;
  pickDataFile(): Promise<unknown>;
  pickWorkspace(mode: 'open' | 'new', name?: string): Promise<unknown>;
  recentWorkspaces(): Promise<unknown>;
  demoWorkspace(): Promise<unknown>;
  launchWorkspace(): Promise<unknown>;
  saveFile(name: string, data: string | Uint8Array): Promise<unknown>;
  /** The report's HTML printed to PDF by the main process (Electron's print engine). */
  printReport(html: string): Promise<unknown>;
  onMenu(listener: (command: MenuCommand) => void): () => void;
}

const handlerNames: ReadonlySet<string> = new Set(HANDLER_NAMES);

function subscribe(ipc: IpcRendererLike, channel: string, listener: (event: unknown, ...args: unknown[]) => void): () => void {
  ipc.on(channel, listener);
  return () => void ipc.removeListener(channel, listener);
}

export function buildBridge(ipc: IpcRendererLike): ManyfieldBridge {
  // Host actions answer a Result; the page gets the value, or an Error with the message.
  const host = (action: HostAction) => async (...args: unknown[]): Promise<unknown> => {
    const r = (await ipc.invoke(hostChannel(action), ...args)) as { ok: boolean; data?: unknown; error?: { message: string } };
    if (!r.ok) throw new Error(r.error?.message ?? `${action} failed`);
    return r.data;
  };
  return Object.freeze({
    call: async (name: string, args: unknown, callId: string) => {
      if (typeof name !== 'string' || !handlerNames.has(name)) return { ok: false, error: { code: 'not-found', message: `no handler named "${String(name)}"` } };
      return ipc.invoke(callChannel(name as HandlerNameList), args, String(callId));
    },
    cancel: (callId: string) => ipc.send(CANCEL_CHANNEL, String(callId)),
    onProgress: (listener: ProgressListener) =>
      subscribe(ipc, PROGRESS_CHANNEL, (_event, message) => {
        const m = message as ProgressMessage;
        listener(m.callId, m.event);
      }),
    pickDataFile: host('pickDataFile'),
    pickWorkspace: host('pickWorkspace'),
    recentWorkspaces: host('recentWorkspaces'),
    demoWorkspace: host('demoWorkspace'),
    launchWorkspace: host('launchWorkspace'),
    saveFile: host('saveFile'),
    printReport: host('printReport'),
    onMenu: (listener: (command: MenuCommand) => void) => subscribe(ipc, MENU_CHANNEL, (_event, command) => listener(command as MenuCommand)),
  });
}
