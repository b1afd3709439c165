// The renderer's Electron host against the real preload bridge (main/bridge.ts) over a fake IPC:
// the two halves agree on call ids, progress routing, cancel and host actions.
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { buildBridge, type IpcRendererLike } from '../../../main/bridge.js';
import { callChannel, CANCEL_CHANNEL, hostChannel, PROGRESS_CHANNEL } from '../../../main/channels.js';
import { electronHost } from '../../../renderer/host/electronHost.js';
import type { ProgressEvent } from '../../../renderer/host/types.js';

type Listener = (event: unknown, ...args: unknown[]) => void;

class FakeIpc implements IpcRendererLike {
  readonly sent: [string, unknown[]][] = [];
  readonly listeners = new Map<string, Set<Listener>>();
  answer: (channel: string, args: unknown[]) => Promise<unknown> = async () => ({ ok: true, data: null });
  invoke(channel: string, ...args: unknown[]): Promise<unknown> {
    return this.answer(channel, args);
  }
  send(channel: string, ...args: unknown[]): void {
    this.sent.push([channel, args]);
  }
  on(channel: string, listener: Listener): void {
    if (!this.listeners.has(channel)) this.listeners.set(channel, new Set());
    this.listeners.get(channel)?.add(listener);
  }
  removeListener(channel: string, listener: Listener): void {
    this.listeners.get(channel)?.delete(listener);
  }
  emit(channel: string, ...args: unknown[]): void {
    for (const l of this.listeners.get(channel) ?? []) l({}, ...args);
  }
}

let ipc: FakeIpc;

beforeEach(() => {
  ipc = new FakeIpc();
  globalThis.manyfield = buildBridge(ipc);
});

afterEach(() => {
  globalThis.manyfield = undefined;
});

describe('Electron host over the preload bridge', () => {
  it('sends a call on its own channel with an id and routes only that id’s progress to it', async () => {
    const events: ProgressEvent[] = [];
    ipc.answer = async (channel, args) => {
      expect(channel).toBe(callChannel('data.import'));
      const id = args[1] as string;
      ipc.emit(PROGRESS_CHANNEL, { callId: 'someone-else', event: { stage: 'read', fraction: 0.9 } });
      ipc.emit(PROGRESS_CHANNEL, { callId: id, event: { stage: 'store', fraction: 0.5 } });
      return { ok: true, data: { trials: 2 } };
    };
    const r = await electronHost.call('data.import', { workspace: 'w', file: 'file:1', mapping: { columns: {} } }, { onProgress: (e) => events.push(e) });
    expect(r).toEqual({ ok: true, data: { trials: 2 } });
    expect(events).toEqual([{ stage: 'store', fraction: 0.5 }]);
    // The progress listener is removed once the call is answered.
    expect(ipc.listeners.get(PROGRESS_CHANNEL)?.size ?? 0).toBe(0);
  });

  it('cancels by sending the call id when the signal aborts', async () => {
    let release: (v: unknown) => void = () => undefined;
    let callId = '';
    ipc.answer = (_channel, args) => {
      callId = args[1] as string;
      return new Promise((resolve) => (release = resolve));
    };
    const controller = new AbortController();
    const pending = electronHost.call('data.validate', { workspace: 'w', file: 'file:1', mapping: { columns: {} } }, { signal: controller.signal });
    await Promise.resolve();
    controller.abort();
    expect(ipc.sent).toEqual([[CANCEL_CHANNEL, [callId]]]);
    release({ ok: false, error: { code: 'cancelled', message: 'cancelled' } });
    const r = await pending;
    expect(!r.ok && r.error.code).toBe('cancelled');
  });

  it('unwraps host actions and turns their refusals into errors', async () => {
    ipc.answer = async (channel) => (channel === hostChannel('demoWorkspace') ? { ok: true, data: '/u/demo.manyfield' } : { ok: false, error: { message: 'no window' } });
    expect(await electronHost.demoWorkspace()).toBe('/u/demo.manyfield');
    await expect(electronHost.pickDataFile()).rejects.toThrow('no window');
  });
});
