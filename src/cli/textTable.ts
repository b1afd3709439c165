// Fixed-width columns for terminal tables; numbers right-aligned, text left-aligned.
export function textTable(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const numeric = header.map((_, j) => rows.length > 0 && rows.every((r) => /^[-+]?[\d.,eE%<>−]*$/.test(r[j] ?? '')));
  const line = (cells: readonly string[]) => cells.map((c, j) => (numeric[j] ? c.padStart(widths[j]) : c.padEnd(widths[j]))).join('  ').trimEnd();
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

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
