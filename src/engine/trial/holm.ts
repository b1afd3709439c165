// Holm's (1979) step-down adjustment of p-values (Scand. J. Statist. 6:65–70): the i-th
// smallest p times (m - i + 1), made monotone, capped at 1.
export function holmAdjust(p: readonly number[]): number[] {
  const m = p.length;
  const order = p.map((_, i) => i).sort((a, b) => p[a] - p[b]);
  const out = new Array<number>(m);
  let running = 0;
  order.forEach((idx, rank) => {
    running = Math.max(running, Math.min(1, (m - rank) * p[idx]));
    out[idx] = running;
  });
  return out;
}
