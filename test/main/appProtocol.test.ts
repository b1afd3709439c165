// app://manyfield/ serves the renderer's files (index.html for app routes), never a file outside
// the renderer folder, the placeholder before the renderer is built, and the CSP on every answer.
import { afterAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { appFile } from '../../main/appProtocol.js';
import { CONTENT_SECURITY_POLICY, PLACEHOLDER_PAGE } from '../../src/server/staticFiles.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-app-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('app protocol', () => {
  it('serves the placeholder page until the renderer is built', () => {
    const f = appFile(join(dir, 'missing'), 'app://manyfield/index.html');
    expect(f).toMatchObject({ status: 200, body: PLACEHOLDER_PAGE });
    expect(f.headers['Content-Security-Policy']).toBe(CONTENT_SECURITY_POLICY);
  });

  it('serves built files with their type, index.html for app routes, and nothing outside the folder', () => {
    const root = join(dir, 'renderer');
    mkdirSync(join(root, 'assets'), { recursive: true });
    writeFileSync(join(root, 'index.html'), '<html>app</html>');
    writeFileSync(join(root, 'assets', 'main.js'), 'console.log(1)');
    writeFileSync(join(dir, 'secret.txt'), 'secret');
    const js = appFile(root, 'app://manyfield/assets/main.js');
    expect(js.headers['Content-Type']).toMatch(/javascript/);
    expect(Buffer.from(js.body).toString()).toBe('console.log(1)');
    expect(Buffer.from(appFile(root, 'app://manyfield/trials/12').body).toString()).toBe('<html>app</html>');
    for (const url of ['app://manyfield/../secret.txt', 'app://manyfield/%2e%2e/secret.txt', 'app://manyfield/assets/%2e%2e%2f%2e%2e%2fsecret.txt'])
      expect(Buffer.from(appFile(root, url).body).toString()).not.toBe('secret');
    expect(appFile(root, 'https://example.org/index.html').status).toBe(404);
  });
});
