#!/usr/bin/env node
// `npm start [-- --browser] [--no-open] [--workspace W]`: the desktop window on the demo
// workspace, or the browser mode where the Electron runtime is absent (see src/server/startCommand.ts).
import { existsSync } from 'node:fs';

const entry = new URL('../dist/server/startCommand.js', import.meta.url);
if (!existsSync(entry)) {
  process.stderr.write('manyfield: not built yet; run `npm run build` (npm install does this) and try again\n');
  process.exit(1);
}
const { startCommand } = await import(entry.href);
process.exitCode = await startCommand(process.argv.slice(2));
