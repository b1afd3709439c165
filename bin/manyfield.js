#!/usr/bin/env node
// The `manyfield` command: runs the compiled CLI (built by `npm install` through the prepare
// step) — the one-file bundle when it exists, else the compiled modules.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const bundle = new URL('../dist/cli/bundle.mjs', import.meta.url);
const modules = new URL('../dist/cli/main.js', import.meta.url);
const entry = existsSync(fileURLToPath(bundle)) ? bundle : modules;
if (!existsSync(fileURLToPath(entry))) {
  process.stderr.write('manyfield: the program is not built yet; run `npm run build` in the project folder\n');
  process.exit(2);
}
const { main } = await import(entry.href);
process.exitCode = await main(process.argv.slice(2));
