// Small helpers for writing the report's HTML as text: escaping, and numbers marked with the
// path of the analysis JSON they come from (data-key), so a test can read every number back
// from the page and compare it with the analysis document.

export function esc(s: unknown): string {
  return String(s).replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
}

export type Maybe = number | null | undefined;

export function finite(x: Maybe): x is number {
  return x !== null && x !== undefined && Number.isFinite(x);
}

/** Fixed decimals without "-0" and without thousands separators (the test parses them back). */
export function fixedText(x: number, decimals: number): string {
  const s = x.toFixed(decimals);
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

export interface NumberOptions {
  /** Shown as a percentage: the JSON value times 100. */
  readonly percent?: boolean;
  /** A p-value: shown as "< 0.0001" below that. */
  readonly p?: boolean;
}

/**
 * A number from the analysis JSON at `key` (dot path, array indices as numbers), shown with
 * `decimals` decimals. A missing value reads "not available" and carries no key.
 */
export function num(key: string, value: Maybe, decimals: number, o: NumberOptions = {}): string {
  if (!finite(value)) return '<span class="na">n/a</span>';
  if (o.p && value < 0.0001) return `<span class="n" data-key="${esc(key)}" data-bound="below">&lt; 0.0001</span>`;
  if (o.percent && value > 0.995) return `<span class="n" data-key="${esc(key)}" data-bound="above" data-scale="100">more than 99.5%</span>`;
  if (o.percent && value < 0.005 && value > 0) return `<span class="n" data-key="${esc(key)}" data-bound="below" data-scale="100">less than 0.5%</span>`;
  const shown = o.percent ? value * 100 : value;
  // A probability at an end itself (99.5%, 0.5%) keeps its decimal: whole percent would read 100%.
  const atEnd = o.percent && (value === 0.995 || value === 0.005);
  const d = o.p ? (value < 0.01 ? 4 : 3) : atEnd ? 1 : decimals;
  return `<span class="n" data-key="${esc(key)}" data-decimals="${d}"${o.percent ? ' data-scale="100"' : ''}>${fixedText(shown, d)}${o.percent ? '%' : ''}</span>`;
}

/** Decimals that keep an SE's leading digit (two when it starts with 1 or 2): as the text summary rounds. */
export { decimalsFromSe } from '../text/numbers.js';

export function table(head: readonly string[], rows: readonly (readonly string[])[], className = ''): string {
  return `<table class="${className}"><thead><tr>${head.map((h) => `<th>${h}</th>`).join('')}</tr></thead><tbody>${rows
    .map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`)
    .join('')}</tbody></table>`;
}

export interface Section {
  readonly id: string;
  readonly title: string;
  readonly html: string;
  /** Starts on a new page when printed. */
  readonly newPage?: boolean;
}

export function sectionHtml(s: Section, number: number): string {
  return `<section id="${esc(s.id)}" class="${s.newPage ? 'new-page' : ''}"><h2>${number}. ${esc(s.title)}</h2>${s.html}</section>`;
}

/** Decimals that show three significant digits of x (0 to 8). */
export function sigDecimals(x: Maybe): number {
  if (!finite(x) || x === 0) return 2;
  return Math.min(8, Math.max(0, 2 - Math.floor(Math.log10(Math.abs(x)))));
}
