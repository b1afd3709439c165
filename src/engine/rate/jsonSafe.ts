// Non-finite numbers become null so results survive JSON.stringify unchanged.
import type { Num } from './types.js';

export function num(x: number | null | undefined): Num {
  return x === null || x === undefined || !Number.isFinite(x) ? null : x;
}

export function numRecord(r: Readonly<Record<string, number>>): Record<string, Num> {
  const out: Record<string, Num> = {};
  for (const [k, v] of Object.entries(r)) out[k] = num(v);
  return out;
}
