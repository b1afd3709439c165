#!/usr/bin/env node
// Bundles the command into dist/cli/bundle.mjs (plus chunks loaded on first use): loading ~1,000
// small modules (the distribution functions alone pull in hundreds) costs a fresh process about a
// third of a second; a bundle loads far faster. The bundle sits in dist/cli/ like main.js, so
// paths it resolves relative to itself (the migrations folder) stay the same.
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

// Chunks of an earlier build carry other hashes: remove them so dist/cli/ holds one build.
const outDir = join(root, 'dist', 'cli');
if (existsSync(outDir)) for (const f of readdirSync(outDir)) if (/^chunk-.*\.mjs$/.test(f)) rmSync(join(outDir, f));
await esbuild.build({
  absWorkingDir: root,
  // Code splitting: what the command imports on first use (the workspace store with its native
  // SQLite module, the demo, XLSX import) goes into chunk files beside the bundle, so
  // `analyze --data` never reads or compiles it. Chunks stay in dist/cli/ for the same relative paths.
  entryPoints: { bundle: 'src/cli/main.ts' },
  outdir: 'dist/cli',
  splitting: true,
  chunkNames: 'chunk-[name]-[hash]',
  outExtension: { '.js': '.mjs' },
  // Less text to scan and compile at start-up; identifiers are kept so stack traces stay readable.
  minifyWhitespace: true,
  minifySyntax: true,
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  external: ['better-sqlite3'],
  // CommonJS packages inside an ES module bundle still call require() for Node built-ins.
  banner: { js: "import { createRequire as __createRequire } from 'node:module'; const require = __createRequire(import.meta.url);" },
  plugins: [noZodLocaleList],
  logLevel: 'warning',
});
