// What the preload exposes to the page as window.manyfield: one function per handler of the
// map, cancel, the host actions, and menu commands. Pure (it takes an ipcRenderer-like object),
// so the exposed surface is tested without Electron. A sandboxed preload may require nothing
// but "electron", so this file imports only the handler names and channel names.
import { HANDLER_NAMES, type HandlerNameList } from '../src/api/handlerNames.js';
import {
  callChannel,
  CANCEL_CHANNEL,
  hostChannel,
  HOST_ACTIONS,
  MENU_CHANNEL,
  PROGRESS_CHANNEL,
  type HostAction,
  type MenuCommand,
  type ProgressMessage,
} from './channels.js';

export interface IpcRendererLike {
  invoke(channel: string, ...args: unknown[]): Promise<unknown>;
  send(channel: string, ...args: unknown[]): void;
  on(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
  removeListener(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
}

type ProgressListener = (event: ProgressMessage['event']) => void;
/** A handler over IPC: resolves the handler's Result (never rejects for a refusal). */
export type BridgeCall = (args: unknown, callId?: string, onProgress?: ProgressListener) => Promise<unknown>;

export interface ManyfieldBridge {
  readonly api: Readonly<Record<HandlerNameList, BridgeCall>>;
  cancel(callId: string): void;
  readonly host: Readonly<Record<HostAction, (...args: unknown[]) => Promise<unknown>>>;
  onMenu(listener: (command: MenuCommand) => void): () => void;
}

export function buildBridge(ipc: IpcRendererLike): ManyfieldBridge {
  const listeners = new Map<string, ProgressListener>();
  let counter = 0;
  ipc.on(PROGRESS_CHANNEL, (_event, message) => {
    const m = message as ProgressMessage;
    listeners.get(m.callId)?.(m.event);
  });
  const call = (name: HandlerNameList): BridgeCall => async (args, callId, onProgress) => {
    const id = typeof callId === 'string' && callId.length > 0 ? callId : `call-${++counter}`;
    if (typeof onProgress === 'function') listeners.set(id, onProgress);
    try {
      return await ipc.invoke(callChannel(name), args, id);
    } finally {
      listeners.delete(id);
    }
  };
  const api = Object.freeze(Object.fromEntries(HANDLER_NAMES.map((name) => [name, call(name)])) as Record<HandlerNameList, BridgeCall>);
  // Host actions answer a Result; the page's host gets the value, or an Error with the message.
  const host = Object.freeze(
    Object.fromEntries(
      HOST_ACTIONS.map((action) => [
        action,
        async (...args: unknown[]) => {
          const r = (await ipc.invoke(hostChannel(action), ...args)) as { ok: boolean; data?: unknown; error?: { message: string } };
          if (!r.ok) throw new Error(r.error?.message ?? `${action} failed`);
          return r.data;
        },
      ]),
    ) as Record<HostAction, (...args: unknown[]) => Promise<unknown>>,
  );
  return Object.freeze({
    api,
    cancel: (callId: string) => ipc.send(CANCEL_CHANNEL, String(callId)),
    host,
    onMenu: (listener: (command: MenuCommand) => void) => {
      const wrapped = (_event: unknown, command: unknown): void => listener(command as MenuCommand);
      ipc.on(MENU_CHANNEL, wrapped);
      return () => void ipc.removeListener(MENU_CHANNEL, wrapped);
    },
  });
}
