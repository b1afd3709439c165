// A one-line progress bar on stderr, drawn only on a terminal.
export interface ProgressBar {
  update(label: string, fraction: number): void;
  done(): void;
}

export function progressBar(stream: NodeJS.WriteStream = process.stderr, width = 30): ProgressBar {
  const enabled = stream.isTTY === true;
  let last = '';
  return {
    update(label: string, fraction: number): void {
      if (!enabled) return;
      const f = Math.min(1, Math.max(0, fraction));
      const filled = Math.round(f * width);
      const line = `\r${label.padEnd(6)} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${String(Math.floor(f * 100)).padStart(3)}%`;
      if (line !== last) stream.write(line);
      last = line;
    },
    done(): void {
      if (enabled && last !== '') stream.write('\n');
      last = '';
    },
  };
}
