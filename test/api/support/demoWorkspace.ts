// The demo workspace (42 trials, built by src/api/workspace/demo.ts) in a temp folder, once per
// test file; tests that change it work on a copy.
import { copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import type { Result } from '../../../src/api/result.js';

let dir: string | null = null;
let built: string | null = null;
let copies = 0;

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true });
});

export function scratchDir(): string {
  dir ??= mkdtempSync(join(tmpdir(), 'manyfield-api-'));
  return dir;
}

export async function demoWorkspace(): Promise<string> {
  if (built) return built;
  const path = join(scratchDir(), 'demo.manyfield');
  const r = await api['demo.build']({ workspace: path });
  if (!r.ok) throw new Error(r.error.message);
  built = path;
  return path;
}

/** A private copy of the demo for a test that excludes plots or imports. */
export async function demoCopy(): Promise<string> {
  const source = await demoWorkspace();
  const path = join(scratchDir(), `copy-${copies++}.manyfield`);
  copyFileSync(source, path);
  return path;
}

export function data<T>(r: Result<T>): T {
  if (!r.ok) throw new Error(`${r.error.code}: ${r.error.message}`);
  return r.data;
}
