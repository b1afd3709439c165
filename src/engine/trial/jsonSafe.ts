// JSON has no NaN or Infinity: such values leave the engine as null.
import type { Num } from './types.js';

export function num(x: number): Num {
  return Number.isFinite(x) ? x : null;
}
