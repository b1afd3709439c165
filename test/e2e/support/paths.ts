// Where the e2e tests find the built app and put what they leave for people to look at.
import { existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const PROJECT_ROOT = fileURLToPath(new URL('../../..', import.meta.url));
export const SERVE_SCRIPT = join(PROJECT_ROOT, 'scripts', 'serve.js');
export const SCREENS_DIR = join(PROJECT_ROOT, 'test-output', 'screens');

/** Fails loudly, naming the command to run, when the built server or renderer is missing. */
export function requireBuilt(): void {
  const needed = [
    [join(PROJECT_ROOT, 'dist', 'server', 'serveCommand.js'), 'npm run build'],
    [join(PROJECT_ROOT, 'dist', 'renderer', 'index.html'), 'npm run build:renderer'],
  ] as const;
  for (const [file, command] of needed) if (!existsSync(file)) throw new Error(`e2e: ${file} is missing; run \`${command}\` first`);
}

export function screensDir(): string {
  mkdirSync(SCREENS_DIR, { recursive: true });
  return SCREENS_DIR;
}
