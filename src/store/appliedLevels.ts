// Per-trial applied amounts (migration 0006): a treatment coded by level number carries, in a
// trial, the amount applied at that site where it differs from the protocol's level. Stored on
// import inside the import's transaction, read back into each TrialInput's appliedLevels, the
// same shape the file path (`analyze --data`) builds, so every analysis path sees one thing.
import type Database from 'better-sqlite3';
import type { ParsedPlotTable } from '../intake/types.js';
import { refuseInconsistent } from './tableConsistency.js';

export type AppliedLevels = Record<string, Record<string, number>>;

/** Writes the table's per-trial amounts; the trials, treatments and factors are stored already. */
export function storeAppliedLevels(
  db: Database.Database,
  table: ParsedPlotTable,
  protocolId: number,
  trialIds: ReadonlyMap<string, number>,
  treatmentIds: ReadonlyMap<string, number>,
): number {
  if (!table.trials.some((t) => t.appliedLevels && Object.keys(t.appliedLevels).length > 0)) return 0;
  const factorId = db.prepare('SELECT id FROM factor WHERE protocol_id = ? AND name = ? AND kind = ?');
  const insert = db.prepare('INSERT INTO trial_applied_level (trial_id, treatment_id, factor_id, value_num) VALUES (?, ?, ?, ?)');
  let rows = 0;
  for (const t of table.trials) {
    for (const [code, levels] of Object.entries(t.appliedLevels ?? {})) {
      for (const [factor, amount] of Object.entries(levels)) {
        const trial = trialIds.get(t.key);
        const treatment = treatmentIds.get(code);
        const f = factorId.get(protocolId, factor, 'numeric') as { id: number } | undefined;
        if (trial === undefined || treatment === undefined || f === undefined || !Number.isFinite(amount)) {
          refuseInconsistent(`trial "${t.key}" applies ${factor} ${amount} to treatment "${code}", which the table's protocol does not have as a numeric factor and treatment`);
        }
        insert.run(trial, treatment, f.id, amount);
        rows++;
      }
    }
  }
  return rows;
}

/** Each trial's applied amounts (code -> factor -> amount), only for trials that have any. */
export function loadAppliedLevels(db: Database.Database, trialIds: readonly number[]): Map<number, AppliedLevels> {
  const out = new Map<number, AppliedLevels>();
  if (trialIds.length === 0) return out;
  const rows = db
    .prepare(
      `SELECT a.trial_id AS trial, tm.code, f.name AS factor, a.value_num AS amount FROM trial_applied_level a
       JOIN treatment tm ON tm.id = a.treatment_id JOIN factor f ON f.id = a.factor_id
       WHERE a.trial_id IN (SELECT value FROM json_each(?)) ORDER BY a.trial_id, tm.id, f.position`,
    )
    .all(JSON.stringify(trialIds)) as { trial: number; code: string; factor: string; amount: number }[];
  for (const r of rows) {
    const levels = out.get(r.trial) ?? {};
    (levels[r.code] ??= {})[r.factor] = r.amount;
    out.set(r.trial, levels);
  }
  return out;
}
