// The main-process side of the bridge, pure (it takes an ipcMain-like object): one handler per
// channel of channels.ts, each argument checked by the policy and then by the handler's own zod
// schema, long handlers run in a worker with progress sent back to the calling window, cancel
// by call id. Calls from any frame but the app's own pages are refused.
import type { ProgressEvent } from '../src/api/context.js';
import { toApiError } from '../src/api/errors.js';
import { applyPolicy, type ArgsPolicy } from '../src/api/host/argsPolicy.js';
import { HANDLER_NAMES, LONG_HANDLERS, type HandlerNameList } from '../src/api/handlerNames.js';
import { fail, type Result } from '../src/api/result.js';
import { callChannel, CANCEL_CHANNEL, hostChannel, HOST_ACTIONS, PROGRESS_CHANNEL, type HostAction, type ProgressMessage } from './channels.js';
import { isAppUrl } from './guards.js';

export interface SenderLike {
  send(channel: string, ...args: unknown[]): void;
  isDestroyed?(): boolean;
}

export interface InvokeEventLike {
  readonly sender: SenderLike;
  readonly senderFrame?: { readonly url: string } | null;
}

export interface IpcMainLike {
  handle(channel: string, listener: (event: InvokeEventLike, ...args: unknown[]) => unknown): void;
  on(channel: string, listener: (event: InvokeEventLike, ...args: unknown[]) => void): void;
}

export type Runner = (name: HandlerNameList, args: unknown, ctx: { onProgress: (e: ProgressEvent) => void; signal: AbortSignal }) => Promise<Result<unknown>>;

export interface DispatchDeps {
  readonly policy: ArgsPolicy;
  /** In-process call of a quick handler. */
  readonly runQuick: Runner;
  /** A long handler off the main thread (a worker). */
  readonly runLong: Runner;
  /** Host actions (dialogs, recent list, demo, saving); each answers a value or throws. */
  readonly host: Readonly<Record<HostAction, (...args: unknown[]) => Promise<unknown>>>;
  readonly onWorkspaceUsed?: (path: string) => void;
}

export function trustedSender(event: InvokeEventLike): boolean {
  const url = event.senderFrame?.url;
  return typeof url === 'string' && isAppUrl(url);
}

const untrusted = (): Result<never> => fail('invalid-argument', 'this call did not come from the Manyfield window');

/** Registers every channel; returns the list of channels registered (for the tests). */
export function registerIpc(ipc: IpcMainLike, deps: DispatchDeps): string[] {
  const running = new Map<string, AbortController>();
  const channels: string[] = [];
  for (const name of HANDLER_NAMES) {
    const channel = callChannel(name);
    channels.push(channel);
    ipc.handle(channel, async (event, rawArgs, rawId) => {
      if (!trustedSender(event)) return untrusted();
      const callId = typeof rawId === 'string' ? rawId : '';
      const controller = new AbortController();
      if (callId) running.set(callId, controller);
      const onProgress = (e: ProgressEvent): void => {
        if (callId && !event.sender.isDestroyed?.()) event.sender.send(PROGRESS_CHANNEL, { callId, event: e } satisfies ProgressMessage);
      };
      try {
        const args = applyPolicy(deps.policy, rawArgs);
        const run = LONG_HANDLERS.has(name) ? deps.runLong : deps.runQuick;
        const result = await run(name, args, { onProgress, signal: controller.signal });
        const used = (args as { workspace?: unknown } | null)?.workspace;
        if (result.ok && typeof used === 'string') deps.onWorkspaceUsed?.(used);
        return result;
      } catch (e) {
        return { ok: false, error: toApiError(e) };
      } finally {
        if (callId) running.delete(callId);
      }
    });
  }
  for (const action of HOST_ACTIONS) {
    const channel = hostChannel(action);
    channels.push(channel);
    ipc.handle(channel, async (event, ...args) => {
      if (!trustedSender(event)) return untrusted();
      try {
        return { ok: true, data: await deps.host[action](...args) };
      } catch (e) {
        return { ok: false, error: toApiError(e) };
      }
    });
  }
  ipc.on(CANCEL_CHANNEL, (event, callId) => {
    if (trustedSender(event) && typeof callId === 'string') running.get(callId)?.abort();
  });
  channels.push(CANCEL_CHANNEL);
  return channels;
}
