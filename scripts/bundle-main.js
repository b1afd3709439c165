#!/usr/bin/env node
// Bundles the Electron shell into dist/main/: the main process (index.cjs), the preload
// (preload.cjs: a sandboxed preload must be one file that requires nothing but "electron") and
// the job worker the main process runs long handlers in (jobWorker.cjs). electron and the
// native SQLite module stay outside the bundles. The Electron binary is not needed to build.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

let esbuild;
try {
  esbuild = await import('esbuild');
} catch {
  process.stderr.write('bundle-main: esbuild not installed; the desktop shell is not built (browser mode still works)\n');
  process.exit(0);
}
const root = fileURLToPath(new URL('..', import.meta.url));
const entries = {
  index: 'main/main.ts',
  preload: 'main/preload.ts',
  jobWorker: 'src/api/worker/jobWorker.ts',
};
const present = Object.fromEntries(Object.entries(entries).filter(([, file]) => existsSync(join(root, file))));
if (Object.keys(present).length === 0) process.exit(0);
await esbuild.build({
  absWorkingDir: root,
  entryPoints: present,
  outdir: 'dist/main',
  outExtension: { '.js': '.cjs' },
  format: 'cjs',
  bundle: true,
  platform: 'node',
  target: 'node20',
  // playwright-core prints the report's PDF from the job worker in the browser mode; loaded on use.
  external: ['electron', 'better-sqlite3', 'playwright-core'],
  // The store finds ../../migrations from its own URL; the bundles sit in dist/main/, two levels
  // below the project like dist/store/, so the same relative path holds.
  define: { 'import.meta.url': '__manyfieldModuleUrl' },
  banner: { js: "const __manyfieldModuleUrl = require('node:url').pathToFileURL(__filename).href;" },
  logLevel: 'warning',
});
