// Traits and sites: looked up by name/code, added when new. A trait must keep its canonical
// unit and kind, or its stored values would silently change meaning.
import type Database from 'better-sqlite3';
import type { ParsedTrait } from '../intake/types.js';
import { ImportRefusedError } from './errors.js';

export function mergeTraits(db: Database.Database, traits: readonly ParsedTrait[]): Map<string, number> {
  const stored = db.prepare('SELECT id, name, unit, kind FROM trait').all() as { id: number; name: string; unit: string; kind: string }[];
  const byName = new Map(stored.map((t) => [t.name, t]));
  const ids = new Map<string, number>();
  const insert = db.prepare('INSERT INTO trait (name, unit, kind, lower, upper) VALUES (?, ?, ?, ?, ?)');
  for (const t of traits) {
    const have = byName.get(t.name);
    if (!have) {
      ids.set(t.name, Number(insert.run(t.name, t.unit, t.kind, t.lower, t.upper).lastInsertRowid));
      continue;
    }
    if (have.unit !== t.unit || have.kind !== t.kind) {
      throw new ImportRefusedError(
        'trait-conflict',
        `trait "${t.name}" is stored as ${have.kind} in ${have.unit}, but the file gives it as ${t.kind} in ${t.unit}; map the file's column to the stored unit or use another trait name`,
        { trait: t.name, stored: { unit: have.unit, kind: have.kind }, file: { unit: t.unit, kind: t.kind } },
      );
    }
    ids.set(t.name, have.id);
  }
  return ids;
}

/** Site ids by code, inserting the codes not yet stored (name defaults to the code). */
export function mergeSites(db: Database.Database, codes: Iterable<string>): { ids: Map<string, number>; added: number } {
  const ids = new Map<string, number>();
  for (const s of db.prepare('SELECT id, code FROM site').all() as { id: number; code: string }[]) ids.set(s.code, s.id);
  const insert = db.prepare('INSERT INTO site (code, name) VALUES (?, ?)');
  let added = 0;
  for (const code of codes) {
    if (ids.has(code)) continue;
    ids.set(code, Number(insert.run(code, code).lastInsertRowid));
    added++;
  }
  return { ids, added };
}
