#!/usr/bin/env node
// The `manyfield` command: runs the compiled CLI (built by `npm install` through the prepare
// step) — the one-file bundle when it exists, else the compiled modules. CommonJS on purpose:
// a CommonJS entry and bundle start about 40 ms sooner than ES modules (scripts/bundle.js).
'use strict';
const { existsSync } = require('node:fs');
const { join } = require('node:path');
const { pathToFileURL } = require('node:url');

const bundle = join(__dirname, '..', 'dist', 'cli', 'bundle.cjs');
const modules = join(__dirname, '..', 'dist', 'cli', 'main.js');

async function load() {
  if (existsSync(bundle)) return require(bundle);
  if (existsSync(modules)) return import(pathToFileURL(modules).href);
  process.stderr.write('manyfield: the program is not built yet; run `npm run build` in the project folder\n');
  process.exit(2);
}

load().then(
  async ({ main }) => {
    process.exitCode = await main(process.argv.slice(2));
  },
  (e) => {
    process.stderr.write(`manyfield: ${e && e.stack ? e.stack : e}\n`);
    process.exitCode = 2;
  },
);
