// Bulk inserts: many rows per statement so the JS-to-SQLite crossing is paid once per chunk,
// not once per row. Callers write values straight into one reused flat array (no per-row
// allocation):  const at = ins.nextRow(); ins.values[at] = a; ins.values[at + 1] = b; ...
import type Database from 'better-sqlite3';

export interface BulkInserter {
  /** The shared value buffer; a row's values go at nextRow() .. nextRow() + width - 1. */
  readonly values: unknown[];
  /** Offset in `values` for the next row (writes the previous chunk first if it is full). */
  nextRow(): number;
  /** Write whatever is queued. Call once at the end. */
  flush(): void;
}

/** SQLite allows 32766 bound parameters per statement; about 1000 measured as fast as larger chunks. */
const MAX_PARAMS = 1000;

export function bulkInserter(db: Database.Database, table: string, columns: readonly string[]): BulkInserter {
  const width = columns.length;
  const rowsPerChunk = Math.max(1, Math.floor(MAX_PARAMS / width));
  const head = `INSERT INTO ${table} (${columns.join(', ')}) VALUES `;
  const tuple = `(${columns.map(() => '?').join(', ')})`;
  const full = db.prepare(head + Array(rowsPerChunk).fill(tuple).join(', '));
  const single = db.prepare(head + tuple);
  const values: unknown[] = new Array(rowsPerChunk * width).fill(null);
  let queued = 0;
  return {
    values,
    nextRow(): number {
      if (queued === rowsPerChunk) {
        full.run(values);
        queued = 0;
      }
      return width * queued++;
    },
    flush(): void {
      if (queued === rowsPerChunk) full.run(values);
      else for (let r = 0; r < queued; r++) single.run(values.slice(r * width, r * width + width));
      queued = 0;
    },
  };
}
