// The renderer's built files through the server: index.html for app routes, assets with
// their type, the CSP on the page, nothing outside the renderer folder.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createWorkspace } from '../../src/api/workspace/describe.js';
import { startServer, type RunningServer } from '../../src/server/server.js';
import { CONTENT_SECURITY_POLICY } from '../../src/server/staticFiles.js';
import { rawRequest } from '../support/serverClient.js';

let dir: string;
let server: RunningServer;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'manyfield-static-'));
  const renderer = join(dir, 'renderer');
  mkdirSync(join(renderer, 'assets'), { recursive: true });
  writeFileSync(join(renderer, 'index.html'), '<!doctype html><html><script type="module" src="./assets/app.js"></script></html>');
  writeFileSync(join(renderer, 'assets', 'app.js'), 'export {};');
  writeFileSync(join(dir, 'secret.txt'), 'secret');
  createWorkspace(join(dir, 'w.manyfield'));
  server = await startServer({ workspace: join(dir, 'w.manyfield'), rendererDir: renderer });
});

afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('serving the renderer', () => {
  const get = (path: string) => rawRequest(server.port, path, { 'x-manyfield-token': server.token });

  it('serves index.html with the CSP, assets with their type, and index.html for app routes', async () => {
    const page = await get('/');
    expect(page.status).toBe(200);
    expect(page.body).toContain('./assets/app.js');
    expect(page.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
    const js = await get('/assets/app.js');
    expect(js.headers['content-type']).toMatch(/^text\/javascript/);
    expect(js.body).toBe('export {};');
    expect((await get('/trials/12')).body).toContain('./assets/app.js');
  });

  it('never serves a file outside the renderer folder', async () => {
    for (const path of ['/../secret.txt', '/%2e%2e/secret.txt', '/assets/..%2f..%2fsecret.txt', '/..%5csecret.txt']) expect((await get(path)).body).not.toBe('secret');
  });

  it('refuses to change anything through the page routes', async () => {
    expect((await rawRequest(server.port, '/index.html', { 'x-manyfield-token': server.token }, 'POST')).status).toBe(405);
  });
});
