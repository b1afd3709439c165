// How numbers read on screen and in exports.

/** A number with `digits` significant-looking decimals; an en dash for a missing value. */
export function formatNumber(v: number | null | undefined, decimals = 2): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  return v.toLocaleString('en-GB', { minimumFractionDigits: decimals, maximumFractionDigits: decimals });
}

/** P-values as practitioners read them: below 0.001 shown as "< 0.001". */
export function formatP(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '–';
  if (p < 0.001) return '< 0.001';
  return p.toFixed(3);
}

/**
 * A probability as the report words it (src/report/html/markup.ts, num with percent): whole
 * percent, and "more than 99.5%" / "less than 0.5%" near the ends, where a rounded "100%" or "0%"
 * would claim a certainty the interval does not give. test/renderer/shape/probabilityWording.test.ts
 * checks the two agree.
 */
export function formatProbability(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  if (v > 0.995) return 'more than 99.5%';
  if (v < 0.005 && v > 0) return 'less than 0.5%';
  // The ends themselves: whole-percent rounding would print 99.5% as a certainty.
  if (v === 0.995 || v === 0.005) return `${(v * 100).toFixed(1)}%`;
  const s = (v * 100).toFixed(0);
  return `${s === '-0' ? '0' : s}%`;
}

/** Enough decimals for a value of this size to keep three significant digits. */
export function decimalsFor(scale: number): number {
  if (!Number.isFinite(scale) || scale === 0) return 2;
  const mag = Math.floor(Math.log10(Math.abs(scale)));
  return Math.min(4, Math.max(0, 2 - mag));
}

/** "1 trial", "1,042 trials": a count with its noun in the right number. */
export function plural(n: number, singular: string, pluralForm = `${singular}s`): string {
  return `${n.toLocaleString('en-GB')} ${n === 1 ? singular : pluralForm}`;
}
