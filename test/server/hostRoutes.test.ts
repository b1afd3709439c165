// The browser mode's host endpoints: the session, the workspaces of the folder, a new
// workspace (plain names only, never outside the folder), the demo built once even when asked
// twice at the same moment, and the recent list.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createWorkspace } from '../../src/api/workspace/describe.js';
import { startServer, type RunningServer } from '../../src/server/server.js';
import { HOST_PATHS, TOKEN_HEADER } from '../../src/server/protocol.js';
import { callApi } from '../support/serverClient.js';

let dir: string;
let server: RunningServer;
let base: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'manyfield-host-'));
  createWorkspace(join(dir, 'launch.manyfield'));
  server = await startServer({ workspace: join(dir, 'launch.manyfield'), rendererDir: dir });
  base = `http://127.0.0.1:${server.port}`;
});

afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

async function host(path: string, init: RequestInit = {}): Promise<{ status: number; body: { ok: boolean; data?: unknown; error?: { code: string } } }> {
  const res = await fetch(`${base}${path}`, { ...init, headers: { [TOKEN_HEADER]: server.token } });
  return { status: res.status, body: (await res.json()) as { ok: boolean } };
}

describe('host endpoints', () => {
  it('tells the page its launch workspace and folder', async () => {
    const r = await host(HOST_PATHS.session);
    expect(r.body).toMatchObject({ ok: true, data: { workspace: join(dir, 'launch.manyfield'), folder: dir } });
  });

  it('creates a new workspace from a plain name only, inside the folder', async () => {
    const made = await host(HOST_PATHS.workspace, { method: 'POST', body: JSON.stringify({ mode: 'new', name: 'North trials 2026' }) });
    expect(made.body).toEqual({ ok: true, data: { path: join(dir, 'North trials 2026.manyfield') } });
    expect(existsSync(join(dir, 'North trials 2026.manyfield'))).toBe(true);
    for (const name of ['../escape', '/etc/x', '', 'a/b', '.hidden'])
      expect((await host(HOST_PATHS.workspace, { method: 'POST', body: JSON.stringify({ mode: 'new', name }) })).body).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    expect((await host(HOST_PATHS.workspace, { method: 'POST', body: JSON.stringify({ mode: 'new', name: 'North trials 2026' }) })).body).toMatchObject({ ok: false, error: { code: 'conflict' } });
    const list = await host(HOST_PATHS.workspaces);
    expect(list.body.data).toEqual([
      { path: join(dir, 'North trials 2026.manyfield'), name: 'North trials 2026' },
      { path: join(dir, 'launch.manyfield'), name: 'launch' },
    ]);
  });

  it('builds the demo once when asked twice at the same moment, then lists it among recent workspaces', async () => {
    const [a, b] = await Promise.all([host(HOST_PATHS.demo, { method: 'POST' }), host(HOST_PATHS.demo, { method: 'POST' })]);
    const path = join(dir, 'demo.manyfield');
    expect(a.body).toEqual({ ok: true, data: { path } });
    expect(b.body).toEqual({ ok: true, data: { path } });
    const trials = await callApi(base, server.token, 'trials.list', { workspace: path });
    expect((trials.result as { data: unknown[] }).data).toHaveLength(42);
    // The overview runs the trial stage of every trial: in the worker, with progress lines.
    const overview = await callApi(base, server.token, 'trials.overview', { workspace: path, trait: 'yield' });
    expect((overview.result as { data: unknown[] }).data).toHaveLength(42);
    expect(overview.progress.length).toBeGreaterThan(0);
    expect(overview.progress.every((p) => p.stage === 'trial-stage')).toBe(true);
    const recent = (await host(HOST_PATHS.recent)).body.data as { path: string }[];
    expect(recent[0].path).toBe(path);
    expect(recent.map((r) => r.path)).toContain(join(dir, 'launch.manyfield'));
  });

  it('answers an unknown host endpoint with 404', async () => {
    expect((await host('/api/host/shutdown', { method: 'POST' })).status).toBe(404);
  });
});
