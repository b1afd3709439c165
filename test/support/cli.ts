// Runs the built `manyfield` command as a user would (npm test builds dist/ first).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../..', import.meta.url));
const bin = join(root, 'bin', 'manyfield.cjs');

export interface CliRun {
  readonly status: number;
  readonly stdout: string;
  readonly stderr: string;
}

export function manyfield(args: readonly string[], cwd = root): CliRun {
  if (!existsSync(join(root, 'dist', 'cli', 'main.js'))) throw new Error('dist/ is not built: run `npm run build` (npm test does this first)');
  const r = spawnSync(process.execPath, [bin, ...args], { cwd, encoding: 'utf8', maxBuffer: 512 * 1024 * 1024, timeout: 600_000 });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

export function tempDir(prefix = 'manyfield-test-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}
