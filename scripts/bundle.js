#!/usr/bin/env node
// Bundles the command into one file (dist/cli/bundle.mjs): loading ~1,000 small modules
// (the distribution functions alone pull in hundreds) costs a fresh process about a third of a
// second; one bundle loads in a few milliseconds. The bundle sits in dist/cli/ like main.js, so
// paths it resolves relative to itself (the migrations folder) stay the same.
// Without esbuild (an install without dev dependencies) the command runs from dist/ unbundled.
import { fileURLToPath } from 'node:url';

let esbuild;
try {
  esbuild = await import('esbuild');
} catch {
  process.stderr.write('bundle: esbuild not installed; the command will load dist/ module by module\n');
  process.exit(0);
}
const root = fileURLToPath(new URL('..', import.meta.url));
await esbuild.build({
  absWorkingDir: root,
  entryPoints: ['src/cli/main.ts'],
  outfile: 'dist/cli/bundle.mjs',
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  external: ['better-sqlite3'],
  // CommonJS packages inside an ES module bundle still call require() for Node built-ins.
  banner: { js: "import { createRequire as __createRequire } from 'node:module'; const require = __createRequire(import.meta.url);" },
  logLevel: 'warning',
});
