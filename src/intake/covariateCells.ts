// Trial covariates become numbers when every trial's cell is one. A cell that only looks like
// text by accident would otherwise turn the whole column into text for every trial ("NaN",
// "1,234"), and one too large for a double would be stored as Infinity; each is refused.
import { parseDecimal, type DecimalMode } from './numbers.js';

export interface CellProblem {
  readonly rule: string;
  readonly message: string;
}

const NOT_FINITE_WORD = /^[+-]?(nan|inf|infinity)$/i;
const THOUSANDS_POINT = /^[+-]?\d{1,3}(,\d{3})+(\.\d+)?$/;
const THOUSANDS_COMMA = /^[+-]?\d{1,3}(\.\d{3})+(,\d+)?$/;

/** Why a covariate cell cannot be stored as written, or null when it can. */
export function covariateCellProblem(text: string, mode: DecimalMode): CellProblem | null {
  const t = text.trim();
  const v = parseDecimal(t, mode);
  if (v === Infinity || v === -Infinity) return { rule: 'not-finite', message: 'the number is too large to store (beyond ±1.8e308); check the cell' };
  if (NOT_FINITE_WORD.test(t)) return { rule: 'not-finite', message: `"${t}" is not a value; leave the cell empty where the value is missing` };
  if (mode === 'point' && THOUSANDS_POINT.test(t))
    return { rule: 'thousands-separator', message: 'the number is written with a thousands separator; write it without (e.g. 1234.5), or set decimalComma in the mapping if the comma is the decimal mark' };
  if (mode === 'comma' && THOUSANDS_COMMA.test(t))
    return { rule: 'thousands-separator', message: 'the number is written with a thousands separator; write it without (e.g. 1234,5)' };
  return null;
}
