// A trait's bounds are part of what it means (a yield is not negative, a percentage not above
// 100). Bounds stored with the trait hold for every later import, whatever the new file's
// mapping says; a value outside them refuses the import, naming its cell.
import type Database from 'better-sqlite3';
import type { ParsedPlotTable } from '../intake/types.js';
import { ImportRefusedError } from './errors.js';

const LISTED = 20;

export function checkStoredBounds(db: Database.Database, table: ParsedPlotTable): void {
  const stored = new Map<string, { lower: number | null; upper: number | null; unit: string }>();
  const get = db.prepare('SELECT lower, upper, unit FROM trait WHERE name = ?');
  for (const t of table.traits) {
    const row = get.get(t.name) as { lower: number | null; upper: number | null; unit: string } | undefined;
    if (row && (row.lower !== null || row.upper !== null)) stored.set(t.name, row);
  }
  if (stored.size === 0) return;
  const column = table.mapping.columns.response ?? null;
  const outside: string[] = [];
  let count = 0;
  for (const o of table.observations) {
    const b = stored.get(o.trait);
    if (b === undefined || o.value === null) continue;
    if ((b.lower !== null && o.value < b.lower) || (b.upper !== null && o.value > b.upper)) {
      count++;
      if (outside.length < LISTED) {
        const row = table.plots[o.plot]?.sourceRow ?? 0;
        outside.push(`${table.file}, row ${row}${column ? `, column "${column}"` : ''}, value ${o.value} ${b.unit}: trait "${o.trait}" is stored with bounds ${b.lower ?? '-inf'} to ${b.upper ?? 'inf'} ${b.unit}`);
      }
    }
  }
  if (count === 0) return;
  throw new ImportRefusedError(
    'trait-bounds',
    `${count} value(s) lie outside the bounds the workspace holds for their trait; nothing was imported — correct the values (or the unit in the mapping):\n${outside.join('\n')}${count > LISTED ? `\n... and ${count - LISTED} more` : ''}`,
    { count },
  );
}
