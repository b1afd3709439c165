// `npm start`: the desktop window on the demo workspace (built on first run); where the Electron
// runtime is absent (its download failed: offline, CI, a locked-down machine) it says so in
// one line and serves the same screens in the browser instead.
import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { api } from '../api/handlers.js';
import { openBrowser } from './openBrowser.js';
import { startServer } from './server.js';

const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/** The Electron binary when its npm package and downloaded runtime are both present, else null. */
export function findElectron(load: (id: string) => unknown = createRequire(import.meta.url), exists: (p: string) => boolean = existsSync): string | null {
  try {
    // The package's main export is the binary's path; it throws when the runtime was never downloaded.
    const path = load('electron');
    return typeof path === 'string' && exists(path) ? path : null;
  } catch {
    return null;
  }
}

export interface StartOptions {
  readonly workspace: string;
  readonly browser: boolean;
  readonly open: boolean;
  readonly port: number;
}

export function parseStartArgs(argv: readonly string[], env: NodeJS.ProcessEnv = process.env): StartOptions {
  const at = (flag: string): string | undefined => {
    const i = argv.indexOf(flag);
    return i >= 0 ? argv[i + 1] : undefined;
  };
  return {
    workspace: resolve(at('--workspace') ?? env.MANYFIELD_WORKSPACE ?? join(projectRoot, 'demo.manyfield')),
    browser: argv.includes('--browser'),
    open: !argv.includes('--no-open'),
    port: Number(at('--port') ?? 0),
  };
}

export async function startCommand(argv: readonly string[]): Promise<number> {
  const options = parseStartArgs(argv);
  if (!existsSync(options.workspace)) {
    process.stdout.write(`Building the demo workspace in ${options.workspace} (first run)...\n`);
    const built = await api['demo.build']({ workspace: options.workspace });
    if (!built.ok) {
      process.stderr.write(`manyfield: ${built.error.message}\n`);
      return 1;
    }
  }
  const electron = options.browser ? null : findElectron();
  const mainBundle = join(projectRoot, 'dist', 'main', 'index.cjs');
  if (electron !== null && existsSync(mainBundle)) {
    const code = await runElectron(electron, [mainBundle, '--workspace', options.workspace]);
    if (code !== null) return code;
    process.stdout.write('The Electron runtime did not start here; starting the browser mode instead.\n');
  } else if (!options.browser) {
    process.stdout.write('The Electron runtime is not installed here (its download was skipped or failed); starting the browser mode instead.\n');
  }
  const running = await startServer({ workspace: options.workspace, port: options.port });
  process.stdout.write(`Manyfield is serving at ${running.url}\n`);
  if (options.open) await openBrowser(running.url);
  await new Promise<void>((done) => {
    const stop = (): void => void running.close().then(done);
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
  return 0;
}

/** The window's exit code, or null when Electron could not be started at all. */
function runElectron(binary: string, args: string[]): Promise<number | null> {
  return new Promise((done) => {
    const child = spawn(binary, args, { stdio: 'inherit' });
    child.once('error', () => done(null));
    child.once('exit', (code) => done(code ?? 0));
  });
}
