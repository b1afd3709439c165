// The renderer takes only types from the core (src/) and the shell (main/): any value import
// would bundle core code (SQLite, the engine) into the page. Checked on the source text.
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../..', import.meta.url));

function sources(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return sources(path);
    return /\.(ts|tsx)$/.test(name) && name !== 'vite.config.ts' ? [path] : [];
  });
}

/** Import and re-export statements (possibly spanning lines) reaching into src/ or main/. */
function coreImports(text: string): string[] {
  const statements = text.match(/^(?:import|export)\s[^;]*?from\s+'[^']+';/gms) ?? [];
  return statements.filter((s) => /from\s+'(?:\.\.\/)+(?:src|main)\//.test(s));
}

describe('renderer boundary', () => {
  const files = sources(join(root, 'renderer'));

  it('finds the renderer sources', () => {
    expect(files.length).toBeGreaterThan(20);
  });

  it('imports only types from src/ and main/', () => {
    const offending = files.flatMap((f) =>
      coreImports(readFileSync(f, 'utf8'))
        .filter((s) => !/^(?:import|export)\s+type\s/.test(s))
        .map((s) => `${relative(root, f)}: ${s.replace(/\s+/g, ' ')}`),
    );
    expect(offending).toEqual([]);
  });

  it('catches a value import in the check itself', () => {
    expect(coreImports("import { api } from '../../src/api/handlers.js';\nimport type { X } from '../../src/a.js';")).toHaveLength(2);
  });
});
