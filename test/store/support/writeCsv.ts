// Write exported rows as CSV (RFC 4180 quoting), as the export command would.
import { writeFileSync } from 'node:fs';

function cell(v: string | number | null): string {
  if (v === null) return '';
  const s = typeof v === 'number' ? String(v) : v;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function writeCsv(file: string, header: readonly string[], rows: readonly (readonly (string | number | null)[])[]): void {
  writeFileSync(file, [header, ...rows].map((r) => r.map(cell).join(',')).join('\n') + '\n');
}
