// A small tmpfs for tests that need a full or read-only disk. Mounting needs root (as in the
// project's CI container); elsewhere `available` is false and those tests are skipped, saying so.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

function tryMount(dir: string, bytes: number): boolean {
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${bytes}`, 'tmpfs', dir], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

export interface SmallDisk {
  readonly dir: string;
  /** Makes the disk read-only (a remount). */
  readOnly(): void;
  release(): void;
}

/** A tmpfs of `bytes` at a fresh folder, or null when this machine does not allow mounting. */
export function smallDisk(bytes: number): SmallDisk | null {
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-disk-'));
  if (!tryMount(dir, bytes)) {
    rmSync(dir, { recursive: true, force: true });
    return null;
  }
  return {
    dir,
    readOnly: () => execFileSync('mount', ['-o', 'remount,ro', dir], { stdio: 'ignore' }),
    release: () => {
      execFileSync('umount', [dir], { stdio: 'ignore' });
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Whether tmpfs mounts work here (checked once). */
export const canMountDisks: boolean = (() => {
  const d = smallDisk(1 << 20);
  d?.release();
  return d !== null;
})();
