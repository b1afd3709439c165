// Maximum of a function of several non-negative variances by nested one-dimensional searches:
// the last variance is maximised for each value of the one before, and so on (each by Brent's
// method on [0, upper] with the zero boundary compared). Meant for two or three components,
// where it is robust on the boundary and needs no derivatives.
import { brentMaximum } from './brentMaximum.js';
import { brentRoot } from '../rootFinding.js';

export interface NestedMaximum {
  x: number[];
  value: number;
}

export function nestedMaximum(f: (x: readonly number[]) => number, dims: number, upper: number, fixed: readonly number[] = []): NestedMaximum {
  if (dims === 0) return { x: [...fixed], value: f(fixed) };
  let bestInner: NestedMaximum | null = null;
  const outer = brentMaximum((x0) => nestedMaximum(f, dims - 1, upper, [...fixed, x0]).value, 0, upper);
  bestInner = nestedMaximum(f, dims - 1, upper, [...fixed, outer.x]);
  return bestInner;
}

/**
 * Profile-likelihood interval for component `which`: where the maximum over the other components
 * falls `drop` below `best`. Lower end 0 when the profile at zero stays above that level.
 */
export function nestedProfileInterval(f: (x: readonly number[]) => number, dims: number, upper: number, hat: readonly number[], best: number, which: number, drop: number): { lower: number | null; upper: number | null } {
  const cutoff = best - drop;
  const profile = (v: number) => {
    const g = (others: readonly number[]) => {
      const x = [...others];
      x.splice(which, 0, v);
      return f(x);
    };
    return nestedMaximum(g, dims - 1, Math.max(upper, 2 * v)).value - cutoff;
  };
  const h = hat[which];
  let lower: number | null = 0;
  if (h > 0 && profile(0) < 0) lower = brentRoot(profile, 0, h, { xTol: 1e-12 * h });
  let hi = Math.max(2 * h, upper / 10, 1e-8);
  let up: number | null = null;
  for (let i = 0; i < 60 && hi <= upper * 1e6; i++) {
    if (profile(hi) < 0) {
      up = brentRoot(profile, h, hi, { xTol: 1e-10 * hi });
      break;
    }
    hi *= 2;
  }
  return { lower, upper: up };
}
