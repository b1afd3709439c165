// CSV text for exports: comma-separated, fields quoted only when they need it, empty for null.
// Text cells that a spreadsheet would run as a formula are neutralised (see neutraliseFormula).
import { parseDecimal } from '../intake/numbers.js';

export function toCsv(header: readonly string[], rows: readonly (readonly (string | number | null)[])[]): string {
  const lines = [header.map(field).join(',')];
  for (const r of rows) lines.push(r.map(field).join(','));
  return `${lines.join('\n')}\n`;
}

/** First characters that make a spreadsheet treat a cell as a formula (or a DDE command). */
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * A text cell beginning with =, +, -, @, a tab or a carriage return gets a leading single quote,
 * as the OWASP guidance on CSV injection recommends: the spreadsheet then shows the text instead
 * of running it (`=HYPERLINK(...)`, `+cmd|...`, `@SUM(...)`). Text that is a plain number
 * ("-2", "-0.5") is left alone, so numbers stay numbers; "-2+1" is not a plain number.
 */
export function neutraliseFormula(text: string): string {
  if (!FORMULA_START.test(text)) return text;
  if (!Number.isNaN(parseDecimal(text, 'point'))) return text;
  return `'${text}`;
}

function field(v: string | number | null): string {
  if (v === null) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : neutraliseFormula(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
