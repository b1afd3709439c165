// What depends on a design matrix alone, kept for the next call: trials laid out alike at the
// same rates give the same matrix one after another, so its factorisation is computed once per
// run of such trials. A matrix equal in every entry gives the same result, so nothing changes.
import type { Matrix } from '../linalg/matrix.js';

export class SameMatrixMemo<T> {
  private rows = -1;
  private cols = -1;
  private data: Float64Array | null = null;
  private value: T | undefined;

  get(x: Matrix, compute: (x: Matrix) => T): T {
    if (this.data !== null && x.rows === this.rows && x.cols === this.cols && sameEntries(x.data, this.data)) return this.value as T;
    const value = compute(x);
    this.rows = x.rows;
    this.cols = x.cols;
    this.data = x.data.slice();
    this.value = value;
    return value;
  }
}

// Object.is: NaN matches NaN, and 0 and -0 count as different entries (they can factor differently).
function sameEntries(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}
