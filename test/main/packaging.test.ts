// electron-builder.yml and package.json agree with what the build produces: the main bundle it
// names exists after a build, all three platforms are described, the worker and the native
// module are unpacked from the archive, and Electron stays an optional dependency (so an
// install without its runtime download still succeeds).
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

const root = fileURLToPath(new URL('../..', import.meta.url));
const yml = readFileSync(join(root, 'electron-builder.yml'), 'utf8');
const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { optionalDependencies?: Record<string, string>; dependencies: Record<string, string>; devDependencies: Record<string, string>; scripts: Record<string, string> };

describe('packaging', () => {
  it('names the built main bundle and describes Linux, Windows and macOS packages', () => {
    const main = /^\s+main:\s+(\S+)$/m.exec(yml)?.[1];
    expect(main).toBe('dist/main/index.cjs');
    expect(existsSync(join(root, main!))).toBe(true);
    for (const platform of ['linux', 'win', 'mac']) expect(yml).toMatch(new RegExp(`^${platform}:\\n\\s+target: \\[[^\\]]+\\]`, 'm'));
    for (const unpacked of ['dist/main/jobWorker.cjs', 'migrations/**', 'node_modules/better-sqlite3/**']) expect(yml).toContain(`  - ${unpacked}`);
  });

  it('keeps electron optional and has the launch scripts', () => {
    expect(pkg.optionalDependencies?.electron).toMatch(/^\d+\.\d+\.\d+$/);
    expect(pkg.dependencies.electron).toBeUndefined();
    expect(pkg.devDependencies.electron).toBeUndefined();
    for (const s of ['start', 'serve', 'build:main', 'rebuild:electron', 'rebuild:node']) expect(pkg.scripts[s]).toBeDefined();
  });
});
