#!/usr/bin/env node
// `npm run serve -- --workspace W --port P [--no-open]`: the browser mode. Prints one line with
// the URL (and its token) and keeps serving on 127.0.0.1 until stopped.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const entry = fileURLToPath(new URL('../dist/server/serveCommand.js', import.meta.url));
if (!existsSync(entry)) {
  process.stderr.write('manyfield: the server is not built; run `npm run build` first\n');
  process.exit(1);
}
const { serveCommand } = await import(new URL('../dist/server/serveCommand.js', import.meta.url).href);
process.exitCode = await serveCommand(process.argv.slice(2));
