// Finding 5 of the new-user trial: `npx manyfield` worked only inside the project folder, and
// elsewhere npx asked the registry for a package of that name. The README now documents two
// ways that never reach the registry, tested here from a data folder outside the project:
// a global link of the checkout (`npm link`, i.e. `npm install -g <checkout>`) that puts
// `manyfield` on the PATH, and `npm --prefix <checkout> exec --offline -- manyfield`.
import { describe, expect, it, beforeAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, realpathSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { tempDir } from '../support/cli.js';
import { nitrogenMapping, writeNitrogenCsv } from '../support/nitrogenNetwork.js';
import { writeJson } from './support.js';

const root = fileURLToPath(new URL('../..', import.meta.url));
const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';

function run(command: string, args: readonly string[], cwd: string, env: NodeJS.ProcessEnv = {}) {
  const r = spawnSync(command, args, { cwd, encoding: 'utf8', timeout: 120_000, env: { ...process.env, ...env } });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

describe('the command from any folder, without the registry', () => {
  const dir = tempDir();
  const prefix = join(dir, 'global');
  const data = join(dir, 'field-data');

  beforeAll(() => {
    mkdirSync(data);
    writeNitrogenCsv(join(data, 'plots.csv'), { sites: ['S1', 'S2'], years: [2024] });
    writeJson(data, 'map.json', nitrogenMapping());
  });

  it('a global install of the checkout (what `npm link` does) puts `manyfield` on the PATH and runs from a data folder', () => {
    // --offline: npm may use only what is on this machine; the checkout is linked, not fetched.
    const install = run(npm, ['install', '--global', '--prefix', prefix, '--offline', '--no-audit', '--no-fund', '--ignore-scripts', root], dir);
    expect(install.stderr).not.toMatch(/registry\.npmjs\.org/);
    expect(install.status).toBe(0);
    const bin = join(prefix, process.platform === 'win32' ? 'manyfield.cmd' : join('bin', 'manyfield'));
    expect(existsSync(bin)).toBe(true);
    // The installed package is a link to this checkout, so a later `npm run build` updates the command.
    expect(realpathSync(join(prefix, 'lib', 'node_modules', 'manyfield'))).toBe(realpathSync(root));
    const env = { PATH: `${join(prefix, 'bin')}:${process.env.PATH ?? ''}` };
    const version = run('manyfield', ['--version'], data, env);
    expect(version.stdout.trim()).toMatch(/^\d+\.\d+\.\d+/);
    // Relative paths are read from the data folder, the current directory.
    const imported = run('manyfield', ['import', '--workspace', 'trials.manyfield', '--file', 'plots.csv', '--map', 'map.json'], data, env);
    expect(imported.stderr).toBe('');
    expect(imported.status).toBe(0);
    expect(existsSync(join(data, 'trials.manyfield'))).toBe(true);
  });

  it('`npm --prefix <checkout> exec --offline -- manyfield` runs the project\'s command from a data folder', () => {
    const r = run(npm, ['--prefix', root, 'exec', '--offline', '--', 'manyfield', 'trials', '--workspace', 'trials.manyfield', '--json'], data);
    expect(r.stderr).not.toMatch(/registry\.npmjs\.org|ENOTCACHED/);
    expect(r.status).toBe(0);
    expect((JSON.parse(r.stdout) as unknown[]).length).toBe(2);
  });
});
