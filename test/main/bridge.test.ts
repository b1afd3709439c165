// The preload's bridge: window.manyfield exposes one function per handler of the map, cancel,
// the five host actions and menu commands — nothing else, and no generic "invoke" channel.
import { describe, expect, it } from 'vitest';
import { HANDLER_NAMES } from '../../src/api/handlerNames.js';
import { buildBridge, type IpcRendererLike } from '../../main/bridge.js';
import { CANCEL_CHANNEL, invokeChannels, MENU_CHANNEL, PROGRESS_CHANNEL } from '../../main/channels.js';

function fakeIpc() {
  const invoked: { channel: string; args: unknown[] }[] = [];
  const sent: { channel: string; args: unknown[] }[] = [];
  const listeners = new Map<string, ((event: unknown, ...args: unknown[]) => void)[]>();
  let answer: (channel: string, args: unknown[]) => unknown = () => ({ ok: true, data: null });
  const ipc: IpcRendererLike = {
    invoke: async (channel, ...args) => {
      invoked.push({ channel, args });
      return answer(channel, args);
    },
    send: (channel, ...args) => void sent.push({ channel, args }),
    on: (channel, listener) => void listeners.set(channel, [...(listeners.get(channel) ?? []), listener]),
    removeListener: (channel, listener) => void listeners.set(channel, (listeners.get(channel) ?? []).filter((l) => l !== listener)),
  };
  const emit = (channel: string, ...args: unknown[]): void => {
    for (const l of listeners.get(channel) ?? []) l({}, ...args);
  };
  return { ipc, invoked, sent, emit, setAnswer: (f: typeof answer) => (answer = f), listeners };
}

describe('preload bridge', () => {
  it('exposes exactly the handler names, cancel, the host actions and onMenu', () => {
    const bridge = buildBridge(fakeIpc().ipc);
    expect(Object.keys(bridge).sort()).toEqual(['api', 'cancel', 'host', 'onMenu']);
    expect(Object.keys(bridge.api).sort()).toEqual([...HANDLER_NAMES].sort());
    expect(Object.keys(bridge.host).sort()).toEqual(['demoWorkspace', 'pickDataFile', 'pickWorkspace', 'recentWorkspaces', 'saveFile']);
    expect(Object.isFrozen(bridge) && Object.isFrozen(bridge.api) && Object.isFrozen(bridge.host)).toBe(true);
  });

  it('invokes only the listed channels, one per handler, and sends only cancel', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    for (const name of HANDLER_NAMES) await bridge.api[name]({ workspace: 'w' });
    for (const action of Object.keys(bridge.host) as (keyof typeof bridge.host)[]) await bridge.host[action]();
    bridge.cancel('c1');
    expect(f.invoked.map((i) => i.channel).sort()).toEqual(invokeChannels().sort());
    expect(new Set(f.invoked.map((i) => i.channel)).size).toBe(HANDLER_NAMES.length + 5);
    expect(f.sent).toEqual([{ channel: CANCEL_CHANNEL, args: ['c1'] }]);
    expect([...f.listeners.keys()]).toEqual([PROGRESS_CHANNEL]);
  });

  it('routes progress to the call it belongs to and forgets the listener after the answer', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    let release: () => void = () => {};
    f.setAnswer(() => new Promise((resolve) => (release = () => resolve({ ok: true, data: 1 }))));
    const seen: unknown[] = [];
    const pending = bridge.api['data.import']({}, 'job-7', (e) => seen.push(e));
    f.emit(PROGRESS_CHANNEL, { callId: 'job-7', event: { stage: 'read', fraction: 0.5 } });
    f.emit(PROGRESS_CHANNEL, { callId: 'other', event: { stage: 'read', fraction: 0.9 } });
    release();
    expect(await pending).toEqual({ ok: true, data: 1 });
    f.emit(PROGRESS_CHANNEL, { callId: 'job-7', event: { stage: 'store', fraction: 1 } });
    expect(seen).toEqual([{ stage: 'read', fraction: 0.5 }]);
    expect(f.invoked[0].args).toEqual([{}, 'job-7']);
  });

  it('turns a refused host action into a rejected promise, and unsubscribes menu listeners', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    f.setAnswer(() => ({ ok: false, error: { code: 'invalid-argument', message: 'nope' } }));
    await expect(bridge.host.pickWorkspace('sideways')).rejects.toThrow('nope');
    const commands: unknown[] = [];
    const off = bridge.onMenu((c) => commands.push(c));
    f.emit(MENU_CHANNEL, { command: 'import-data' });
    off();
    f.emit(MENU_CHANNEL, { command: 'import-data' });
    expect(commands).toEqual([{ command: 'import-data' }]);
  });
});
