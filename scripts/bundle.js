#!/usr/bin/env node
// Bundles the command into dist/cli/bundle.cjs: loading ~1,000 small modules (the distribution
// functions alone pull in hundreds) costs a fresh process about a third of a second; a bundle
// loads far faster. The bundle sits in dist/cli/ like main.js, so paths it resolves relative to
// itself (the migrations folder) stay the same.
// Without esbuild (an install without dev dependencies) the command runs from dist/ unbundled.
import { existsSync, readdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

let esbuild;
try {
  esbuild = await import('esbuild');
} catch {
  process.stderr.write('bundle: esbuild not installed; the command will load dist/ module by module\n');
  process.exit(0);
}
const root = fileURLToPath(new URL('..', import.meta.url));

// zod exposes every message language as `z.locales` (about 300 KB of a 1 MB bundle); the command
// only uses English, which zod imports directly from locales/en.js, so the language list is
// replaced by an empty module and never parsed at start-up.
const noZodLocaleList = {
  name: 'no-zod-locale-list',
  setup(build) {
    build.onResolve({ filter: /\/locales\/index\.js$/ }, (args) =>
      /[\\/]node_modules[\\/]zod[\\/]/.test(args.importer) ? { path: 'zod-locale-list', namespace: 'no-zod-locales' } : undefined,
    );
    build.onLoad({ filter: /.*/, namespace: 'no-zod-locales' }, () => ({ contents: 'export {};', loader: 'js' }));
  },
};

// Files of earlier builds (the ES-module bundle and its chunks) are removed so dist/cli/ holds one build.
const outDir = join(root, 'dist', 'cli');
if (existsSync(outDir)) for (const f of readdirSync(outDir)) if (/^(chunk-.*\.mjs|bundle\.mjs|bundle\.cjs|analysisWorker\.cjs|reportCharts\.cjs)$/.test(f)) rmSync(join(outDir, f));
await esbuild.build({
  absWorkingDir: root,
  // The analysis worker (src/api/analysis/cancellable.ts finds it beside the bundle).
  entryPoints: { bundle: 'src/cli/main.ts', analysisWorker: 'src/api/analysis/analysisWorker.ts' },
  outdir: 'dist/cli',
  outExtension: { '.js': '.cjs' },
  // CommonJS, loaded by a CommonJS bin/manyfield.cjs: a fresh process starts and loads it about
  // 40 ms sooner than the same code as ES modules (no module loader to set up, no per-module
  // linking). What the command needs only on first use (the workspace store with its native
  // SQLite module, the demo, XLSX import) is imported dynamically in the source; esbuild keeps
  // those modules behind lazy initialisers, so `analyze --data` never runs their code.
  format: 'cjs',
  // Less text to scan and compile at start-up; identifiers are kept so stack traces stay readable.
  minifyWhitespace: true,
  minifySyntax: true,
  bundle: true,
  platform: 'node',
  target: 'node20',
  external: ['better-sqlite3', 'playwright-core'],
  // The one use of import.meta (the store finding ../../migrations from its own file): the
  // bundle's own URL, which sits in dist/cli/ like the compiled module, so the path is the same.
  define: { 'import.meta.url': '__manyfieldModuleUrl' },
  banner: { js: "const __manyfieldModuleUrl = require('node:url').pathToFileURL(__filename).href;" },
  plugins: [noZodLocaleList],
  logLevel: 'warning',
});
// The shared charts (React, pure SVG) for the report, drawn to text in Node.
await esbuild.build({
  absWorkingDir: root,
  entryPoints: { reportCharts: 'renderer/charts/shared/staticCharts.tsx' },
  outdir: 'dist/cli',
  outExtension: { '.js': '.cjs' },
  format: 'cjs',
  jsx: 'automatic',
  minifyWhitespace: true,
  minifySyntax: true,
  bundle: true,
  platform: 'node',
  target: 'node20',
  define: { 'process.env.NODE_ENV': '"production"' },
  logLevel: 'warning',
});
