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
  it('exposes call, cancel, progress, the seven host actions and menu commands — nothing else', () => {
    const bridge = buildBridge(fakeIpc().ipc);
    expect(Object.keys(bridge).sort()).toEqual(['call', 'cancel', 'demoWorkspace', 'launchWorkspace', 'onMenu', 'onProgress', 'pickDataFile', 'pickWorkspace', 'printReport', 'recentWorkspaces', 'saveFile']);
    expect(Object.isFrozen(bridge)).toBe(true);
  });

  it('reaches exactly one channel per handler and per host action; cancel is the only message sent', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    for (const name of HANDLER_NAMES) await bridge.call(name, { workspace: 'w' }, `id-${name}`);
    for (const action of ['pickDataFile', 'pickWorkspace', 'recentWorkspaces', 'demoWorkspace', 'launchWorkspace', 'saveFile', 'printReport'] as const) await bridge[action]('open' as never, 'x' as never);
    bridge.cancel('c1');
    expect(f.invoked.map((i) => i.channel).sort()).toEqual(invokeChannels().sort());
    expect(new Set(f.invoked.map((i) => i.channel)).size).toBe(HANDLER_NAMES.length + 7);
    expect(f.invoked.find((i) => i.channel === 'manyfield:call:trials.list')!.args).toEqual([{ workspace: 'w' }, 'id-trials.list']);
    expect(f.sent).toEqual([{ channel: CANCEL_CHANNEL, args: ['c1'] }]);
  });

  it('refuses a name outside the handler map without sending anything', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    for (const name of ['shell.openExternal', 'constructor', '__proto__', '', 'manyfield:cancel'])
      expect(await bridge.call(name, {}, 'x')).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect(f.invoked).toEqual([]);
  });

  it('passes progress with its call id to listeners until they unsubscribe', () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    const seen: unknown[] = [];
    const off = bridge.onProgress((callId, e) => seen.push([callId, e]));
    f.emit(PROGRESS_CHANNEL, { callId: 'job-7', event: { stage: 'read', fraction: 0.5 } });
    off();
    f.emit(PROGRESS_CHANNEL, { callId: 'job-7', event: { stage: 'store', fraction: 1 } });
    expect(seen).toEqual([['job-7', { stage: 'read', fraction: 0.5 }]]);
  });

  it('turns a refused host action into a rejected promise, and unsubscribes menu listeners', async () => {
    const f = fakeIpc();
    const bridge = buildBridge(f.ipc);
    f.setAnswer(() => ({ ok: false, error: { code: 'invalid-argument', message: 'nope' } }));
    await expect(bridge.pickWorkspace('open')).rejects.toThrow('nope');
    const commands: unknown[] = [];
    const off = bridge.onMenu((c) => commands.push(c));
    f.emit(MENU_CHANNEL, { command: 'import-data' });
    off();
    f.emit(MENU_CHANNEL, { command: 'import-data' });
    expect(commands).toEqual([{ command: 'import-data' }]);
  });
});
