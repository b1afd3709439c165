// `npm run serve -- --workspace W --port P` as a user runs it (the built script): one line with
// a loopback URL and its token; the page answers 200 with the token, /api/ 401 without it.
import { describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { rawRequest } from '../support/serverClient.js';

const root = fileURLToPath(new URL('../..', import.meta.url));

function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = createServer().listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

describe('npm run serve', () => {
  it('prints one loopback URL with the token and serves the page only with it', async () => {
    if (!existsSync(join(root, 'dist', 'server', 'serveCommand.js'))) throw new Error('dist/ is not built: run `npm run build`');
    const dir = mkdtempSync(join(tmpdir(), 'manyfield-serve-'));
    const port = await freePort();
    const child = spawn(process.execPath, [join(root, 'scripts', 'serve.js'), '--workspace', join(dir, 'w.manyfield'), '--port', String(port), '--no-open'], { stdio: ['ignore', 'pipe', 'pipe'] });
    try {
      const line = await new Promise<string>((resolve, reject) => {
        let out = '';
        child.stdout.on('data', (c: Buffer) => {
          out += c.toString();
          if (out.includes('\n')) resolve(out);
        });
        child.once('exit', (code) => reject(new Error(`serve exited with ${code}`)));
      });
      const match = /^Manyfield is serving at (http:\/\/127\.0\.0\.1:(\d+)\/\?token=([\w-]+))\n$/.exec(line);
      expect(match).not.toBeNull();
      expect(Number(match![2])).toBe(port);
      const token = match![3];
      expect((await rawRequest(port, '/api/host/session', {})).status).toBe(401);
      expect((await rawRequest(port, '/api/call/trials.list', {}, 'POST')).status).toBe(401);
      expect((await rawRequest(port, '/', {})).status).toBe(401);
      const redirect = await rawRequest(port, `/?token=${token}`);
      expect(redirect.status).toBe(303);
      const page = await rawRequest(port, '/', { cookie: `mf_token=${token}` });
      expect(page.status).toBe(200);
      expect(page.body).toMatch(/<html/);
      const session = await rawRequest(port, '/api/host/session', { 'x-manyfield-token': token });
      expect(JSON.parse(session.body)).toMatchObject({ ok: true, data: { workspace: join(dir, 'w.manyfield') } });
    } finally {
      child.kill('SIGTERM');
      await new Promise((r) => child.once('exit', r));
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
