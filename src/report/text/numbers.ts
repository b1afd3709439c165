// How numbers read in the text summary. Effects are rounded from their standard error, as
// results are usually reported (common practice, no single source): the SE keeps two
// significant digits when it starts with 1 or 2, one otherwise, and the effect and its
// interval get the same number of decimals.

export type Maybe = number | null | undefined;

function finite(x: Maybe): x is number {
  return x !== null && x !== undefined && Number.isFinite(x);
}

/** Decimals that keep the SE's leading digit (two when it starts with 1 or 2); 0 to 8. */
export function decimalsFromSe(se: Maybe): number {
  if (!finite(se) || se <= 0) return 3;
  const exponent = Math.floor(Math.log10(se));
  const leading = se / 10 ** exponent;
  const d = -exponent + (leading < 3 ? 1 : 0);
  return Math.min(8, Math.max(0, d));
}

/** A number with fixed decimals; missing as a dash; no "-0". */
export function fixed(x: Maybe, decimals: number): string {
  if (!finite(x)) return '-';
  const s = x.toFixed(decimals);
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

/** A number to a few significant digits, plain for everyday sizes. */
export function sig(x: Maybe, digits = 3): string {
  if (!finite(x)) return '-';
  if (x !== 0 && (Math.abs(x) < 1e-4 || Math.abs(x) >= 1e7)) return x.toExponential(digits - 1);
  return Number(x.toPrecision(digits)).toString();
}

/** "1.37 (1.29 to 1.46) t/ha": the effect with its interval in one cell, then the unit. */
export function effectCell(estimate: Maybe, lower: Maybe, upper: Maybe, unit: string | null, se?: Maybe): string {
  if (!finite(estimate)) return '-';
  const d = decimalsFromSe(se ?? (finite(lower) && finite(upper) ? (upper - lower) / 4 : null));
  const interval = finite(lower) && finite(upper) ? ` (${fixed(lower, d)} to ${fixed(upper, d)})` : '';
  return `${fixed(estimate, d)}${interval}${unit ? ` ${unit}` : ''}`;
}

/** An interval alone: "0.67 to 2.07 t/ha". */
export function rangeText(lower: Maybe, upper: Maybe, unit: string | null, decimals: number): string {
  if (!finite(lower) || !finite(upper)) return '-';
  return `${fixed(lower, decimals)} to ${fixed(upper, decimals)}${unit ? ` ${unit}` : ''}`;
}

export function seText(se: Maybe): string {
  return sig(se, 2);
}

export function dfText(df: Maybe): string {
  if (!finite(df)) return '-';
  return df >= 100 ? df.toFixed(0) : df.toFixed(1);
}

export function pText(p: Maybe): string {
  if (!finite(p)) return '-';
  if (p < 0.0001) return '<0.0001';
  return p < 0.01 ? p.toFixed(4) : p.toFixed(3);
}

/**
 * A probability in words, as the HTML report and the screens give it: whole percent, and
 * "more than 99.5%" / "less than 0.5%" near the ends, never a rounded certainty.
 */
export function probabilityText(x: Maybe): string {
  if (!finite(x)) return '-';
  if (x > 0.995) return 'more than 99.5%';
  if (x < 0.005 && x > 0) return 'less than 0.5%';
  // The ends themselves: whole-percent rounding would print 99.5% as a certainty.
  if (x === 0.995 || x === 0.005) return percent(x, 1);
  return percent(x);
}

/** A share 0..1 as a percentage. */
export function percent(x: Maybe, decimals = 0): string {
  return finite(x) ? `${(100 * x).toFixed(decimals)}%` : '-';
}

export function levelText(confidence: number): string {
  return `${Math.round(confidence * 1000) / 10}%`;
}

/** p in a sentence: "p < 0.0001", "p = 0.032". */
export function pPhrase(p: Maybe): string {
  const t = pText(p);
  return t.startsWith('<') ? `p < ${t.slice(1)}` : `p = ${t}`;
}
