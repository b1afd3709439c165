// The main process's IPC dispatch with a fake ipcMain and the real handlers on the demo
// workspace: every handler's channel is registered and nothing else, arguments go through the
// picked-files policy and the handler's zod schema, other frames are refused, progress reaches
// the calling window and cancel aborts the call.
import { describe, expect, it } from 'vitest';
import { callHandler, HANDLER_NAMES } from '../../src/api/handlers.js';
import type { Result } from '../../src/api/result.js';
import { registerIpc, type InvokeEventLike, type IpcMainLike, type Runner } from '../../main/ipcDispatch.js';
import { CANCEL_CHANNEL, invokeChannels, PROGRESS_CHANNEL } from '../../main/channels.js';
import { PickedFiles } from '../../main/pickedFiles.js';
import { demoWorkspace } from '../api/support/demoWorkspace.js';

type Handler = (event: InvokeEventLike, ...args: unknown[]) => unknown;

function fakeIpcMain() {
  const handlers = new Map<string, Handler>();
  const listeners = new Map<string, Handler>();
  const ipc: IpcMainLike = {
    handle: (channel, listener) => {
      if (handlers.has(channel)) throw new Error(`twice: ${channel}`);
      handlers.set(channel, listener);
    },
    on: (channel, listener) => void listeners.set(channel, listener),
  };
  return { ipc, handlers, listeners };
}

function windowEvent(url = 'app://manyfield/index.html') {
  const sent: { channel: string; args: unknown[] }[] = [];
  const event: InvokeEventLike = { sender: { send: (channel, ...args) => void sent.push({ channel, args }) }, senderFrame: { url } };
  return { event, sent };
}

const quick: Runner = (name, args, ctx) => callHandler(name, args, ctx);
const noHost = { pickDataFile: async () => null, pickWorkspace: async () => null, recentWorkspaces: async () => [], demoWorkspace: async () => '', launchWorkspace: async () => null, saveFile: async () => false, printReport: async () => new Uint8Array() };

describe('IPC dispatch', () => {
  it('registers one channel per handler, the host actions and cancel — nothing else', () => {
    const f = fakeIpcMain();
    const channels = registerIpc(f.ipc, { policy: new PickedFiles(), runQuick: quick, runLong: quick, host: noHost });
    expect([...f.handlers.keys()].sort()).toEqual(invokeChannels().sort());
    expect([...f.listeners.keys()]).toEqual([CANCEL_CHANNEL]);
    expect(channels.sort()).toEqual([...invokeChannels(), CANCEL_CHANNEL].sort());
    expect(f.handlers.size).toBe(HANDLER_NAMES.length + 7);
  });

  it('answers with the handler\'s Result for a workspace the user chose, and refuses one they did not', async () => {
    const path = await demoWorkspace();
    const policy = new PickedFiles();
    const f = fakeIpcMain();
    registerIpc(f.ipc, { policy, runQuick: quick, runLong: quick, host: noHost });
    const list = f.handlers.get('manyfield:call:trials.list')!;
    const refused = (await list(windowEvent().event, { workspace: path }, 'c1')) as Result<unknown>;
    expect(refused).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    policy.allowWorkspace(path);
    const answered = (await list(windowEvent().event, { workspace: path }, 'c2')) as Result<unknown[]>;
    expect(answered.ok && answered.data).toHaveLength(42);
  });

  it('validates every argument with the handler\'s zod schema', async () => {
    const path = await demoWorkspace();
    const policy = new PickedFiles();
    policy.allowWorkspace(path);
    const f = fakeIpcMain();
    registerIpc(f.ipc, { policy, runQuick: quick, runLong: quick, host: noHost });
    const detail = f.handlers.get('manyfield:call:trial.detail')!;
    for (const bad of [{ workspace: path, trial: '1', trait: 'yield' }, { workspace: path, trial: 1 }, { workspace: path, trial: 1, trait: 'yield', extra: true }, null, 'x'])
      expect(await detail(windowEvent().event, bad, 'c')).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    const preview = f.handlers.get('manyfield:call:data.preview')!;
    expect(await preview(windowEvent().event, { file: '/etc/passwd' }, 'c')).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
  });

  it('refuses calls from any frame but the app\'s own pages', async () => {
    const f = fakeIpcMain();
    let hostCalled = false;
    registerIpc(f.ipc, { policy: new PickedFiles(), runQuick: quick, runLong: quick, host: { ...noHost, pickDataFile: async () => ((hostCalled = true), null) } });
    for (const url of ['https://example.org/', 'file:///tmp/x.html', 'about:blank']) {
      expect(await f.handlers.get('manyfield:call:trials.list')!(windowEvent(url).event, { workspace: 'w' })).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
      expect(await f.handlers.get('manyfield:host:pickDataFile')!(windowEvent(url).event)).toMatchObject({ ok: false });
    }
    expect(hostCalled).toBe(false);
  });

  it('sends progress to the calling window under its call id, and cancel aborts the running call', async () => {
    const policy = new PickedFiles();
    policy.allowWorkspace('/tmp/w.manyfield');
    const f = fakeIpcMain();
    let seenSignal: AbortSignal | null = null;
    const slow: Runner = (_name, _args, ctx) => {
      seenSignal = ctx.signal;
      ctx.onProgress({ stage: 'read', fraction: 0.25 });
      return new Promise((resolve) => ctx.signal.addEventListener('abort', () => resolve({ ok: false, error: { code: 'cancelled', message: 'cancelled' } })));
    };
    registerIpc(f.ipc, { policy, runQuick: quick, runLong: slow, host: noHost });
    const w = windowEvent();
    const pending = f.handlers.get('manyfield:call:analysis.run')!(w.event, { workspace: '/tmp/w.manyfield', spec: {} }, 'job-1') as Promise<Result<unknown>>;
    f.listeners.get(CANCEL_CHANNEL)!(windowEvent('https://example.org/').event, 'job-1'); // a foreign frame cannot cancel
    expect(seenSignal!.aborted).toBe(false);
    f.listeners.get(CANCEL_CHANNEL)!(w.event, 'job-1');
    expect(await pending).toMatchObject({ ok: false, error: { code: 'cancelled' } });
    expect(w.sent).toEqual([{ channel: PROGRESS_CHANNEL, args: [{ callId: 'job-1', event: { stage: 'read', fraction: 0.25 } }] }]);
  });

  it('maps a picked data file reference to its path and nothing else', () => {
    const policy = new PickedFiles();
    const { ref, name } = policy.addFile('/data/trials 2024.csv');
    expect(name).toBe('trials 2024.csv');
    expect(policy.file('file', ref)).toBe('/data/trials 2024.csv');
    expect(() => policy.file('file', 'file:made-up')).toThrow(/file dialog/);
    expect(() => policy.file('file', '/data/trials 2024.csv')).toThrow(/file dialog/);
  });
});
