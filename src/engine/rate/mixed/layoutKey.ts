// Which trials of the mixed quadratic share a layout: equal q, grouping columns, Z'Z, Z'X and
// X'X. The grouping used to build a text key of every number (about 70 numbers per trial turned
// into text: ~0.1 s at 4,000 trials); here the numbers are compared as numbers, by a hash of
// their bits and then value by value, with the text key's notion of equal: String(x) equal,
// that is equal values, 0 and -0 alike, NaN equal to NaN.
import type { MixedTrialData } from './mixedData.js';

const bits = new Float64Array(1);
const words = new Uint32Array(bits.buffer);

/** The text key counted 0 and -0 as one ("0") and NaN as itself. */
function sameNumber(a: number, b: number): boolean {
  return a === b || (a !== a && b !== b);
}

function sameArray(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!sameNumber(a[i], b[i])) return false;
  return true;
}

function hashNumbers(h: number, a: ArrayLike<number>): number {
  h = Math.imul(h ^ a.length, 0x9e3779b1);
  for (let i = 0; i < a.length; i++) {
    const x = a[i];
    // Equal numbers must hash alike: -0 as 0, every NaN as one NaN.
    bits[0] = x === 0 ? 0 : x !== x ? NaN : x;
    h = Math.imul(h ^ words[0], 0x85ebca6b);
    h = Math.imul(h ^ words[1], 0xc2b2ae35);
    h ^= h >>> 15;
  }
  return h;
}

export function sameLayout(a: MixedTrialData, b: MixedTrialData): boolean {
  return a.q === b.q && sameArray(a.indicatorFactor, b.indicatorFactor) && sameArray(a.ztz, b.ztz) && sameArray(a.ztx, b.ztx) && sameArray(a.xtx, b.xtx);
}

/**
 * Each trial's layout index, numbered in order of first appearance, and the first trial of each
 * layout (the same numbering and representatives as grouping by the text key).
 */
export function groupLayouts(trials: readonly MixedTrialData[]): { layoutOf: Int32Array; representatives: MixedTrialData[] } {
  const byHash = new Map<number, number[]>();
  const representatives: MixedTrialData[] = [];
  const layoutOf = new Int32Array(trials.length);
  trials.forEach((t, i) => {
    let h = Math.imul(t.q, 0x27d4eb2d);
    h = hashNumbers(h, t.indicatorFactor);
    h = hashNumbers(h, t.ztz);
    h = hashNumbers(h, t.ztx);
    h = hashNumbers(h, t.xtx);
    let candidates = byHash.get(h);
    if (candidates === undefined) byHash.set(h, (candidates = []));
    let j = candidates.find((c) => sameLayout(representatives[c], t));
    if (j === undefined) {
      j = representatives.length;
      representatives.push(t);
      candidates.push(j);
    }
    layoutOf[i] = j;
  });
  return { layoutOf, representatives };
}
