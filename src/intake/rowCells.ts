// The cells of the current row, read in place: comparing or parsing a cell allocates nothing,
// which matters when a file has a million rows and most cells repeat the row above.
import { isMissingRange, parseDecimalRange, type DecimalMode } from './numbers.js';

export interface RowCells {
  /** Cells in the current row (the row may be shorter or longer than the header). */
  readonly count: number;
  /** Cell text ('' for an index outside the row or -1, an unmapped column). */
  text(i: number): string;
  /** Whether cell i is exactly `s` (cells outside the row are ''). */
  equals(i: number, s: string): boolean;
  isEmpty(i: number): boolean;
  /** Empty, blank or NA. */
  isMissing(i: number): boolean;
  /** The cell as a plain decimal number, NaN when it is not one (see parseDecimal). */
  number(i: number, mode: DecimalMode): number;
}

/** Cells held as strings (XLSX rows, header rows). */
export class StringCells implements RowCells {
  cells: string[] = [];

  get count(): number {
    return this.cells.length;
  }

  text(i: number): string {
    return i >= 0 && i < this.cells.length ? this.cells[i] : '';
  }

  equals(i: number, s: string): boolean {
    return this.text(i) === s;
  }

  isEmpty(i: number): boolean {
    return this.text(i) === '';
  }

  isMissing(i: number): boolean {
    const t = this.text(i);
    return isMissingRange(t, 0, t.length);
  }

  number(i: number, mode: DecimalMode): number {
    const t = this.text(i);
    return parseDecimalRange(t, 0, t.length, mode);
  }
}
