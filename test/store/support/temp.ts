// Temporary folders for workspace tests, removed after each test file.
import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll } from 'vitest';
import { defaultMigrationsDir } from '../../../src/store/migrate.js';

export function tempDirs(): () => string {
  const made: string[] = [];
  afterAll(() => {
    for (const d of made) rmSync(d, { recursive: true, force: true });
  });
  return () => {
    const d = mkdtempSync(path.join(tmpdir(), 'manyfield-store-test-'));
    made.push(d);
    return d;
  };
}

/** A private copy of the repository's migrations folder that a test may add to or edit. */
export function copyMigrations(into: string): string {
  const dir = path.join(into, 'migrations');
  cpSync(defaultMigrationsDir(), dir, { recursive: true });
  return dir;
}
