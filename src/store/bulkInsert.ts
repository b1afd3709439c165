// Bulk inserts: many rows per statement so the JS-to-SQLite crossing is paid once per chunk,
// not once per row. Values go into one reused flat array; no per-row allocation.
import type Database from 'better-sqlite3';

export interface BulkInserter {
  /** Queue one row; values in the column order given to bulkInserter. */
  add(...values: unknown[]): void;
  /** Write whatever is queued. Call once at the end. */
  flush(): void;
}

/** SQLite allows 32766 bound parameters per statement; stay well under it. */
const MAX_PARAMS = 1000;

export function bulkInserter(db: Database.Database, table: string, columns: readonly string[]): BulkInserter {
  const width = columns.length;
  const rowsPerChunk = Math.max(1, Math.floor(MAX_PARAMS / width));
  const head = `INSERT INTO ${table} (${columns.join(', ')}) VALUES `;
  const tuple = `(${columns.map(() => '?').join(', ')})`;
  const full = db.prepare(head + Array(rowsPerChunk).fill(tuple).join(', '));
  const single = db.prepare(head + tuple);
  const buffer: unknown[] = new Array(rowsPerChunk * width);
  let queued = 0;
  return {
    add(...values: unknown[]): void {
      const at = queued * width;
      for (let i = 0; i < width; i++) buffer[at + i] = values[i];
      queued++;
      if (queued === rowsPerChunk) {
        full.run(buffer);
        queued = 0;
      }
    },
    flush(): void {
      for (let r = 0; r < queued; r++) single.run(buffer.slice(r * width, r * width + width));
      queued = 0;
    },
  };
}
