// A one-line progress bar on stderr, drawn only on a terminal so logs and pipes stay clean.
import type { ProgressEvent } from '../api/context.js';

export function terminalProgress(stream: NodeJS.WriteStream = process.stderr): { onProgress: (e: ProgressEvent) => void; done: () => void } {
  if (!stream.isTTY) return { onProgress: () => {}, done: () => {} };
  let last = 0;
  let drawn = false;
  return {
    onProgress(e) {
      const now = Date.now();
      if (now - last < 80 && e.fraction !== 1) return;
      last = now;
      const width = 30;
      const label = `${e.stage}${e.step ? ` ${e.step}` : ''}`.slice(0, 40);
      const line =
        e.fraction === null
          ? `${label} ...`
          : `[${'#'.repeat(Math.round(e.fraction * width)).padEnd(width, '.')}] ${(100 * e.fraction).toFixed(0).padStart(3)}% ${label}`;
      stream.write(`\r${line.padEnd(80)}`);
      drawn = true;
    },
    done() {
      if (drawn) stream.write(`\r${' '.repeat(80)}\r`);
    },
  };
}
