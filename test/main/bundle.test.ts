// The bundles Electron loads (npm test builds them first): the preload requires nothing but
// "electron", and the bundled job worker runs a handler (the store finds its migrations from
// dist/main/ as it does from dist/store/).
import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runInWorker } from '../../src/api/worker/runInWorker.js';

const dist = fileURLToPath(new URL('../../dist/main/', import.meta.url));

function built(file: string): string {
  const path = join(dist, file);
  if (!existsSync(path)) throw new Error(`${path} is missing: run \`npm run build\` (npm test does this first)`);
  return path;
}

describe('Electron bundles', () => {
  it('the preload requires only "electron"', () => {
    const text = readFileSync(built('preload.cjs'), 'utf8');
    expect([...new Set(text.match(/require\("[^"]+"\)/g))]).toEqual(['require("electron")']);
  });

  it('the main bundle keeps electron and the native module outside', () => {
    const text = readFileSync(built('index.cjs'), 'utf8');
    expect(text).toContain('require("electron")');
    expect(text).toContain('require("better-sqlite3")');
  });

  it('the bundled job worker builds the demo workspace', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'manyfield-bundle-'));
    try {
      const r = await runInWorker('demo.build', { workspace: join(dir, 'demo.manyfield') }, { workerFile: built('jobWorker.cjs') });
      expect(r).toMatchObject({ ok: true, data: { trials: 42 } });
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
