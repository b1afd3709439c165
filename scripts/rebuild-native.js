#!/usr/bin/env node
// Rebuilds the native SQLite module (better-sqlite3) for the runtime that will load it:
//   npm run rebuild:electron   for Electron's runtime (its Node ABI differs from Node's);
//   npm run rebuild:node       back for plain Node (the CLI, the browser mode, the tests).
// One build serves one runtime at a time. Packaging (electron-builder) rebuilds for Electron on
// its own. The Electron target is the version of node_modules/electron; prebuilt binaries are
// fetched when available (prebuild-install), else it compiles (needs a C++ toolchain and Python).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const target = process.argv[2];
if (target !== 'electron' && target !== 'node') {
  process.stderr.write('usage: node scripts/rebuild-native.js electron|node\n');
  process.exit(2);
}
const root = fileURLToPath(new URL('..', import.meta.url));
const env = { ...process.env };
if (target === 'electron') {
  let version;
  try {
    version = JSON.parse(readFileSync(new URL('../node_modules/electron/package.json', import.meta.url), 'utf8')).version;
  } catch {
    process.stderr.write('rebuild: the electron package is not installed (it is an optional dependency); nothing to rebuild for\n');
    process.exit(1);
  }
  Object.assign(env, { npm_config_runtime: 'electron', npm_config_target: version, npm_config_disturl: 'https://electronjs.org/headers' });
  process.stdout.write(`Rebuilding better-sqlite3 for Electron ${version}...\n`);
} else {
  for (const k of ['npm_config_runtime', 'npm_config_target', 'npm_config_disturl']) delete env[k];
  process.stdout.write(`Rebuilding better-sqlite3 for Node ${process.versions.node}...\n`);
}
const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';
const r = spawnSync(npm, ['rebuild', 'better-sqlite3'], { cwd: root, env, stdio: 'inherit', shell: process.platform === 'win32' });
process.exit(r.status ?? 1);
