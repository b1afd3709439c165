// Strict decimal parsing for cell text. `Number()` accepts "", " ", "0x1F" and "Infinity";
// a plot file must not, so cells are checked character by character first.

/** Which decimal separator a cell may use: '.', ',' (decimal-comma files) or either (XLSX text cells). */
export type DecimalMode = 'point' | 'comma' | 'either';

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15];

function isBlankCode(c: number): boolean {
  return c === 32 || c === 9 || c === 160;
}

/**
 * Parses a plain decimal number (optional sign, digits, one decimal separator, optional
 * exponent, surrounding blanks allowed). Returns NaN for anything else, including "".
 */
export function parseDecimal(s: string, mode: DecimalMode): number {
  return parseDecimalRange(s, 0, s.length, mode);
}

/** parseDecimal on s[from, to), without cutting the string out first. */
export function parseDecimalRange(s: string, from: number, to: number, mode: DecimalMode): number {
  let i = from;
  let n = to;
  while (i < n && isBlankCode(s.charCodeAt(i))) i++;
  while (n > i && isBlankCode(s.charCodeAt(n - 1))) n--;
  if (i === n) return NaN;
  const start = i;
  let c = s.charCodeAt(i);
  let negative = false;
  if (c === 43 || c === 45) {
    negative = c === 45;
    i++;
  }
  const allowPoint = mode !== 'comma';
  const allowComma = mode !== 'point';
  let digits = 0;
  let fractionDigits = 0;
  let sepAt = -1;
  let mantissa = 0;
  for (; i < n; i++) {
    c = s.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      digits++;
      mantissa = mantissa * 10 + (c - 48);
      if (sepAt >= 0) fractionDigits++;
    } else if ((c === 46 && allowPoint) || (c === 44 && allowComma)) {
      if (sepAt >= 0) return NaN;
      sepAt = i;
    } else break;
  }
  if (digits === 0) return NaN;
  if (i === n && digits <= 15) {
    // Fast path (Clinger): an exact integer mantissa below 2^53 divided by an exact power of
    // ten is one correctly rounded operation, so it equals the correctly rounded decimal.
    const v = mantissa / POW10[fractionDigits];
    return negative ? -v : v;
  }
  if (i < n) {
    if (c !== 101 && c !== 69) return NaN; // e / E
    i++;
    if (i < n && (s.charCodeAt(i) === 43 || s.charCodeAt(i) === 45)) i++;
    let expDigits = 0;
    for (; i < n; i++) {
      c = s.charCodeAt(i);
      if (c < 48 || c > 57) return NaN;
      expDigits++;
    }
    if (expDigits === 0) return NaN;
  }
  let text = s.slice(start, n);
  if (sepAt >= 0 && s.charCodeAt(sepAt) === 44) {
    const k = sepAt - start;
    text = text.slice(0, k) + '.' + text.slice(k + 1);
  }
  return Number(text);
}

/** The words a plot file may write for "no value", besides an empty cell (any case). */
export const MISSING_TOKENS = ['NA', 'n/a', '.', '-'] as const;

/** Cell text that means "no value": empty, blanks only, NA, n/a (any case), a lone "." or "-". */
export function isMissingText(s: string): boolean {
  return isMissingRange(s, 0, s.length);
}

/** isMissingText on s[from, to). */
export function isMissingRange(s: string, from: number, to: number): boolean {
  let i = from;
  let n = to;
  while (i < n && isBlankCode(s.charCodeAt(i))) i++;
  while (n > i && isBlankCode(s.charCodeAt(n - 1))) n--;
  const len = n - i;
  if (len === 0) return true;
  const c = s.charCodeAt(i);
  if (len === 1) return c === 46 || c === 45; // "." or "-"
  const a = c | 32; // lower case for letters
  if (len === 2) return a === 110 && (s.charCodeAt(i + 1) | 32) === 97; // "na", "NA"
  return len === 3 && a === 110 && s.charCodeAt(i + 1) === 47 && (s.charCodeAt(i + 2) | 32) === 97; // "n/a", "N/A"
}
