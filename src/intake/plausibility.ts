// The import-time plausibility screen: a value far from the other plots of its trial (a decimal
// slip, 81.0 written for 8.10 t/ha; a value in the wrong unit) is listed with its row and column
// as a warning. It is not refused — a real value can be extreme — but nobody should meet it first
// in a forest plot. Values outside a trait's bounds are refused earlier (plotTableBuilder).
import type { IntakeProblem } from './types.js';

/** Robust distance (in scaled MADs from the trial's median) beyond which a value is listed. */
export const PLAUSIBLE_ROBUST_Z = 8;
/** Fewer plots than this give no stable median and spread; such trials are not screened. */
const MIN_PLOTS = 6;
/** Makes the MAD estimate the standard deviation of normal data (common practice). */
const MAD_SCALE = 1.4826;

/** The values of one trait in one trial with their file rows; NaN values (missing) are skipped. */
export interface ValueGroup {
  readonly trial: string;
  readonly trait: string;
  readonly values: ArrayLike<number>;
  readonly rows: ArrayLike<number>;
}

function median(sorted: ArrayLike<number>): number {
  const m = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[m] : (sorted[m - 1] + sorted[m]) / 2;
}

const fmt = (x: number): string => String(Number(x.toPrecision(4)));

/** Warnings (as problems of the file) for values far outside their trial's own spread. */
export function screenPlausibility(groups: Iterable<ValueGroup>, file: string, column: string, unitOf: (trait: string) => string): IntakeProblem[] {
  const out: IntakeProblem[] = [];
  for (const g of groups) {
    // Typed arrays sort numerically in native code (thousands of trials, two sorts each); -0
    // before 0 there, where a comparator kept file order, moves no median (-0 and 0 are equal).
    let count = 0;
    for (let i = 0; i < g.values.length; i++) if (!Number.isNaN(g.values[i])) count++;
    if (count < MIN_PLOTS) continue;
    const sorted = new Float64Array(count);
    for (let i = 0, j = 0; i < g.values.length; i++) if (!Number.isNaN(g.values[i])) sorted[j++] = g.values[i];
    sorted.sort();
    const mid = median(sorted);
    const spread = MAD_SCALE * median(sorted.map((v) => Math.abs(v - mid)).sort());
    if (!(spread > 0)) continue;
    for (let i = 0; i < g.values.length; i++) {
      const value = g.values[i];
      const z = Math.abs(value - mid) / spread;
      if (!(z > PLAUSIBLE_ROBUST_Z)) continue;
      out.push(implausible(file, column, g, value, g.rows[i], mid, z, sorted.length, unitOf(g.trait)));
    }
  }
  return out.sort((a, b) => a.row - b.row);
}

function implausible(file: string, column: string, g: ValueGroup, value: number, row: number, mid: number, z: number, n: number, unit: string): IntakeProblem {
  // A ratio near a power of ten (81.0 against 8.1) points at a slipped decimal point or a unit.
  const decades = mid !== 0 && value !== 0 ? Math.log10(Math.abs(value / mid)) : NaN;
  const power = Math.round(decades);
  const slip = Number.isFinite(decades) && power !== 0 && Math.abs(decades - power) < 0.15
    ? ` (about ${power > 0 ? `${10 ** power} times` : `1/${10 ** -power} of`} the median: a slipped decimal point or another unit?)`
    : '';
  return {
    file,
    row,
    column,
    value: fmt(value),
    rule: 'implausible-value',
    message: `${g.trait} ${fmt(value)}${unit && unit !== 'as-is' ? ` ${unit}` : ''} lies ${fmt(z)} robust standard deviations from the median ${fmt(mid)} of the ${n} plots of trial "${g.trial}"${slip}; it was kept — check the field record, then correct the file or exclude the plot with a reason`,
  };
}
