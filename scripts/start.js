#!/usr/bin/env node
// `npm start`: opens Manyfield on the demo workspace. In this phase the app is the
// `manyfield` command (the screens come next, on the same api), so start builds the demo
// network if needed, lists its trials and runs the example analysis on it.
import { existsSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const cli = fileURLToPath(new URL('../bin/manyfield.cjs', import.meta.url));
const workspace = process.env.MANYFIELD_WORKSPACE ?? 'demo.manyfield';
const spec = fileURLToPath(new URL('../examples/demo-analysis.json', import.meta.url));

function run(args) {
  const r = spawnSync(process.execPath, [cli, ...args], { stdio: 'inherit', cwd: root });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

if (!existsSync(`${root}/${workspace}`) && !existsSync(workspace)) run(['demo', '--workspace', workspace]);
run(['trials', '--workspace', workspace]);
run(['analyze', '--workspace', workspace, '--spec', spec]);
