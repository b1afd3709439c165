// Reads the numbers back from a report's HTML (each carries the JSON path it came from in
// data-key) and compares them with an analysis document: written apart from the report's writer
// so that a shared template cannot hide a mistake. Tolerance: half a unit of the last decimal
// shown (plus 1e-12); a bound ("more than 99.5%", "< 0.0001") must hold.

import { expandAnalysisJson } from '../../src/cli/analysisJson.js';

export function unescapeHtml(s: string): string {
  return s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');
}

export interface MarkedNumber {
  readonly key: string;
  readonly attrs: Record<string, string>;
  readonly text: string;
}

/** Every element carrying data-key, with its attributes and text, read from the markup. */
export function markedNumbers(html: string): MarkedNumber[] {
  const out: MarkedNumber[] = [];
  for (const m of html.matchAll(/<span ([^>]*data-key="[^"]*"[^>]*)>([^<]*)<\/span>/g)) {
    const attrs: Record<string, string> = {};
    for (const a of m[1].matchAll(/([\w-]+)="([^"]*)"/g)) attrs[a[1]] = unescapeHtml(a[2]);
    out.push({ key: attrs['data-key'], attrs, text: unescapeHtml(m[2]) });
  }
  return out;
}

export function valueAt(doc: unknown, path: string): unknown {
  return path.split('.').reduce<unknown>((o, k) => (o === null || o === undefined ? undefined : (o as Record<string, unknown>)[k]), doc);
}

/** The marked numbers that do not agree with `doc`, each described (empty when all agree). */
export function disagreements(marked: readonly MarkedNumber[], doc: unknown): string[] {
  // The keys are paths in the report; the command's default document is in columns (README), read back first.
  const report = expandAnalysisJson(doc);
  const wrong: string[] = [];
  for (const m of marked) {
    const value = valueAt(report, m.key);
    if (typeof value !== 'number') {
      wrong.push(`${m.key}: not a number in the JSON (${String(value)})`);
      continue;
    }
    const v = value * Number(m.attrs['data-scale'] ?? '1');
    const bound = Number(/[\d.]+/.exec(m.text)?.[0]);
    if (m.attrs['data-bound'] === 'below') {
      if (!(v < bound)) wrong.push(`${m.key}: ${v} not below "${m.text}"`);
      continue;
    }
    if (m.attrs['data-bound'] === 'above') {
      if (!(v > bound)) wrong.push(`${m.key}: ${v} not above "${m.text}"`);
      continue;
    }
    const decimals = Number(m.attrs['data-decimals']);
    const shown = Number(m.text.replace('%', ''));
    if (!(Math.abs(shown - v) <= 0.5 * 10 ** -decimals + 1e-12)) wrong.push(`${m.key}: shown ${m.text}, JSON ${v}`);
  }
  return wrong;
}

/** The section titles of the report, in order, as the contents list names them. */
export function contentsTitles(html: string): string[] {
  return [...html.matchAll(/<span class="toc-title">([^<]+)<\/span>/g)].map((m) => unescapeHtml(m[1]));
}
