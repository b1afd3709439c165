// `npm run serve -- --workspace W [--port P] [--no-open]`: prints one line with the URL and keeps
// serving until interrupted. A workspace that does not exist yet is created empty.
import { existsSync } from 'node:fs';
import { api } from '../api/handlers.js';
import { openBrowser } from './openBrowser.js';
import { startServer } from './server.js';

export interface ServeArgs {
  readonly workspace: string;
  readonly port: number;
  readonly open: boolean;
}

export function parseServeArgs(argv: readonly string[]): ServeArgs {
  let workspace: string | undefined;
  let port = 0;
  let open = true;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const value = (): string => {
      const v = argv[++i];
      if (v === undefined || v.startsWith('--')) throw new Error(`${a} needs a value`);
      return v;
    };
    if (a === '--workspace') workspace = value();
    else if (a === '--port') {
      const v = value();
      port = Number(v);
      if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`--port must be a whole number from 0 to 65535; got "${v}"`);
    } else if (a === '--no-open') open = false;
    else throw new Error(`unknown option "${a}" (serve takes --workspace W, --port P, --no-open)`);
  }
  if (workspace === undefined) throw new Error('give --workspace W (a .manyfield file; created empty if it does not exist)');
  return { workspace, port, open };
}

export async function serveCommand(argv: readonly string[]): Promise<number> {
  let args: ServeArgs;
  try {
    args = parseServeArgs(argv);
  } catch (e) {
    process.stderr.write(`manyfield serve: ${(e as Error).message}\n`);
    return 2;
  }
  if (!existsSync(args.workspace)) {
    const created = await api['workspace.create']({ workspace: args.workspace });
    if (!created.ok) {
      process.stderr.write(`manyfield serve: ${created.error.message}\n`);
      return 1;
    }
  }
  let running;
  try {
    running = await startServer({ workspace: args.workspace, port: args.port });
  } catch (e) {
    process.stderr.write(`manyfield serve: ${(e as Error).message}\n`);
    return 1;
  }
  process.stdout.write(`Manyfield is serving at ${running.url}\n`);
  if (args.open) await openBrowser(running.url);
  await new Promise<void>((resolve) => {
    const stop = (): void => {
      void running.close().then(resolve);
    };
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
  return 0;
}
