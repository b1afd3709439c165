// The browser mode's security rules: loopback only, the token before any routing (401 without
// or with a wrong one, page included), the cookie after the URL, the Host check, the CSP, and
// the page unable to name server paths.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createWorkspace } from '../../src/api/workspace/describe.js';
import { startServer, type RunningServer } from '../../src/server/server.js';
import { CONTENT_SECURITY_POLICY, PLACEHOLDER_PAGE } from '../../src/server/staticFiles.js';
import { TOKEN_COOKIE } from '../../src/server/protocol.js';
import { callApi, rawRequest, upload } from '../support/serverClient.js';

let dir: string;
let server: RunningServer;
let base: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'manyfield-server-'));
  createWorkspace(join(dir, 'w.manyfield'));
  // An empty renderer folder: the placeholder page is served.
  server = await startServer({ workspace: join(dir, 'w.manyfield'), rendererDir: join(dir, 'no-renderer') });
  base = `http://127.0.0.1:${server.port}`;
});

afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('browser-mode security', () => {
  it('listens on the loopback address only', () => {
    const address = server.server.address();
    expect(address).toMatchObject({ address: '127.0.0.1', family: 'IPv4' });
    expect(server.url).toBe(`http://127.0.0.1:${server.port}/?token=${server.token}`);
  });

  it('draws a fresh random token per launch', async () => {
    const other = await startServer({ workspace: join(dir, 'w.manyfield'), rendererDir: dir });
    try {
      expect(other.token).not.toBe(server.token);
      expect(other.token.length).toBeGreaterThanOrEqual(32);
    } finally {
      await other.close();
    }
  });

  it('answers 401 to /api/ without a token and with a wrong one, before routing', async () => {
    for (const path of ['/api/call/trials.list', '/api/call/no.such.handler', '/api/host/session', '/api/upload', '/api/nothing']) {
      expect((await rawRequest(server.port, path, {}, 'POST')).status).toBe(401);
      expect((await rawRequest(server.port, path, { 'x-manyfield-token': 'wrong' }, 'POST')).status).toBe(401);
      expect((await rawRequest(server.port, path, { cookie: `${TOKEN_COOKIE}=wrong` }, 'POST')).status).toBe(401);
      // one character changed (a token that happens to end in "x" gets a "y")
      const near = `${server.token.slice(0, -1)}${server.token.endsWith('x') ? 'y' : 'x'}`;
      expect((await rawRequest(server.port, `${path}?token=${near}`, {}, 'POST')).status).toBe(401);
    }
  });

  it('answers 401 to the page and its assets without the token', async () => {
    for (const path of ['/', '/index.html', '/assets/app.js', '/../../etc/passwd']) expect((await rawRequest(server.port, path)).status).toBe(401);
  });

  it('takes the token from the URL once, sets an HttpOnly SameSite=Strict cookie and drops the token from the address', async () => {
    const first = await rawRequest(server.port, `/?token=${server.token}`);
    expect(first.status).toBe(303);
    expect(first.headers.location).toBe('/');
    const cookie = String(first.headers['set-cookie']);
    expect(cookie).toContain(`${TOKEN_COOKIE}=${server.token}`);
    expect(cookie).toContain('HttpOnly');
    expect(cookie).toContain('SameSite=Strict');
    const page = await rawRequest(server.port, '/', { cookie: `${TOKEN_COOKIE}=${server.token}` });
    expect(page.status).toBe(200);
    expect(page.body).toBe(PLACEHOLDER_PAGE);
    expect(page.headers['content-security-policy']).toBe(CONTENT_SECURITY_POLICY);
    expect(CONTENT_SECURITY_POLICY).not.toMatch(/unsafe-eval|https?:|\*/);
    const api = await callApi(base, server.token, 'trials.list', { workspace: join(dir, 'w.manyfield') });
    expect(api.result).toEqual({ ok: true, data: [] });
  });

  it('refuses a request under another host name even with the token (DNS rebinding)', async () => {
    const r = await rawRequest(server.port, '/api/host/session', { 'x-manyfield-token': server.token, host: `evil.example:${server.port}` });
    expect(r.status).toBe(403);
  });

  it('refuses workspaces outside its folder and data files that are not uploads', async () => {
    const outside = await callApi(base, server.token, 'workspace.describe', { workspace: '/etc/passwd' });
    expect(outside.result).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    const traversal = await callApi(base, server.token, 'workspace.describe', { workspace: '../w.manyfield' });
    expect(traversal.result).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    const path = await callApi(base, server.token, 'data.preview', { file: '/etc/hostname' });
    expect(path.result).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    const unknown = await callApi(base, server.token, 'data.preview', { file: 'upload:00000000-0000-0000-0000-000000000000' });
    expect(unknown.result).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    const ref = await upload(base, server.token, '../../evil name.csv', Buffer.from('site,year,trt,y\nA,2020,C,1\n'));
    expect(ref.name).toBe('evil name.csv');
    const preview = await callApi(base, server.token, 'data.preview', { file: ref.ref });
    expect(preview.result).toMatchObject({ ok: true, data: { format: 'csv', header: ['site', 'year', 'trt', 'y'], rowCount: 1 } });
  });

  it('names uploaded files by their own name in answers, never by the server\'s temporary path', async () => {
    const ref = await upload(base, server.token, 'field book.csv', Buffer.from('site,year,block,trt,yield\nA,2020,1,CTL,abc\n'));
    const mapping = { columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield' }, trait: { name: 'yield', unit: 't/ha' } };
    const r = await callApi(base, server.token, 'data.import', { workspace: join(dir, 'w.manyfield'), file: ref.ref, mapping });
    expect(r.result).toMatchObject({ ok: false, error: { code: 'invalid-input' } });
    const text = JSON.stringify(r.result);
    expect(text).toContain('field book.csv');
    expect(text).not.toContain('manyfield-uploads-');
    const problems = (r.result as { error: { details: { problems: { file: string; row: number; column: string; value: string }[] } } }).error.details.problems;
    expect(problems).toContainEqual(expect.objectContaining({ file: 'field book.csv', row: 2, column: 'yield', value: 'abc' }));
  });

  it('answers an unknown handler and bad arguments with Result values, not crashes', async () => {
    expect((await callApi(base, server.token, 'no.such', {})).result).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect((await callApi(base, server.token, 'trial.detail', { workspace: join(dir, 'w.manyfield'), trial: -1, trait: 'y' })).result).toMatchObject({
      ok: false,
      error: { code: 'invalid-argument' },
    });
  });
});
