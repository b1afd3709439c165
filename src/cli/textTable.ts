// Fixed-width terminal tables (shared with the text summary) and the number formats of the listings.
export { textTable } from '../report/text/table.js';

/** A number for a table: significant digits, no trailing noise; missing as a dash. */
export function num(v: number | null | undefined, digits = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '-';
  if (v !== 0 && (Math.abs(v) < 1e-3 || Math.abs(v) >= 1e6)) return v.toExponential(2);
  return Number(v.toPrecision(digits)).toString();
}

export function pValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '-';
  return p < 1e-4 ? '<0.0001' : p.toFixed(4);
}
