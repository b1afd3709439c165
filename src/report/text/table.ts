// Fixed-width columns for terminal tables; numbers right-aligned, text left-aligned.
export function textTable(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const numeric = header.map((_, j) => rows.length > 0 && rows.every((r) => /^[-+]?[\d.,eE%<>−]*$/.test(r[j] ?? '')));
  const line = (cells: readonly string[]) => cells.map((c, j) => (numeric[j] ? c.padStart(widths[j]) : c.padEnd(widths[j]))).join('  ').trimEnd();
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/** A section: a title line, then its body; empty bodies give nothing. */
export function section(title: string, body: readonly string[]): string[] {
  const lines = body.filter((l) => l !== '');
  return lines.length === 0 ? [] : ['', title, ...lines];
}
