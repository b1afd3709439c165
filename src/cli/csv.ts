// CSV text for exports: comma-separated, fields quoted only when they need it, empty for null.
export function toCsv(header: readonly string[], rows: readonly (readonly (string | number | null)[])[]): string {
  const lines = [header.map(field).join(',')];
  for (const r of rows) lines.push(r.map(field).join(','));
  return `${lines.join('\n')}\n`;
}

function field(v: string | number | null): string {
  if (v === null) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : v;
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
