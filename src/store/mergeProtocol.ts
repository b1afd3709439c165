// Merge a file's protocol (factors, treatments, control) into the stored one of the same name.
// Anything new is added; anything that contradicts what is stored refuses the whole import.
import type Database from 'better-sqlite3';
import type { FactorInfo, LevelValue, TreatmentInfo } from '../engine/types.js';
import { ImportRefusedError } from './errors.js';
import { describeLevel, levelFromColumns, levelToColumns, sameLevel, type StoredLevel } from './levels.js';

export interface ProtocolIds {
  readonly protocolId: number;
  readonly treatmentIds: ReadonlyMap<string, number>;
  readonly newTreatments: number;
}

interface ProtocolPart {
  /** The file being imported and its plots, so a conflict names the file and a row. */
  readonly file?: string;
  readonly plots?: readonly { readonly treatment: string; readonly sourceRow: number }[];
  readonly protocol: string;
  readonly control: string | null;
  readonly factors: readonly FactorInfo[];
  readonly treatments: readonly TreatmentInfo[];
}

function protocolId(db: Database.Database, name: string, control: string | null): number {
  const row = db.prepare('SELECT id, control_code FROM protocol WHERE name = ?').get(name) as
    | { id: number; control_code: string | null }
    | undefined;
  if (!row) return Number(db.prepare('INSERT INTO protocol (name, control_code) VALUES (?, ?)').run(name, control).lastInsertRowid);
  if (control !== null) {
    if (row.control_code === null) db.prepare('UPDATE protocol SET control_code = ? WHERE id = ?').run(control, row.id);
    else if (row.control_code !== control) {
      throw new ImportRefusedError(
        'control-conflict',
        `the file names "${control}" as the control of protocol "${name}", but the workspace has "${row.control_code}"; use the same control code or another protocol name`,
        { protocol: name, stored: row.control_code, file: control },
      );
    }
  }
  return row.id;
}

function mergeFactors(db: Database.Database, pid: number, protocol: string, factors: readonly FactorInfo[]): Map<string, { id: number; info: FactorInfo }> {
  const stored = db.prepare('SELECT id, name, kind, unit, position FROM factor WHERE protocol_id = ? ORDER BY position').all(pid) as {
    id: number;
    name: string;
    kind: 'numeric' | 'categorical';
    unit: string | null;
    position: number;
  }[];
  const byName = new Map(stored.map((f) => [f.name, { id: f.id, info: { name: f.name, kind: f.kind, unit: f.unit ?? undefined } as FactorInfo }]));
  let position = stored.length ? stored[stored.length - 1].position + 1 : 0;
  const insert = db.prepare('INSERT INTO factor (protocol_id, name, kind, unit, position) VALUES (?, ?, ?, ?, ?)');
  for (const f of factors) {
    const have = byName.get(f.name);
    if (!have) {
      const id = Number(insert.run(pid, f.name, f.kind, f.unit ?? null, position++).lastInsertRowid);
      byName.set(f.name, { id, info: f });
      continue;
    }
    const unitClash = f.unit !== undefined && have.info.unit !== undefined && f.unit !== have.info.unit;
    if (have.info.kind !== f.kind || unitClash) {
      throw new ImportRefusedError(
        'factor-conflict',
        `factor "${f.name}" of protocol "${protocol}" is ${f.kind}${f.unit ? ` in ${f.unit}` : ''} in the file but ${have.info.kind}${have.info.unit ? ` in ${have.info.unit}` : ''} in the workspace; make the file agree or use another protocol name`,
        { protocol, factor: f.name, stored: have.info, file: f },
      );
    }
  }
  return byName;
}

export function mergeProtocol(db: Database.Database, part: ProtocolPart): ProtocolIds {
  const pid = protocolId(db, part.protocol, part.control);
  const factors = mergeFactors(db, pid, part.protocol, part.factors);

  const storedLevels = new Map<string, Map<string, LevelValue>>();
  const treatmentIds = new Map<string, number>();
  for (const t of db.prepare('SELECT id, code FROM treatment WHERE protocol_id = ?').all(pid) as { id: number; code: string }[]) {
    treatmentIds.set(t.code, t.id);
    storedLevels.set(t.code, new Map());
  }
  const levelRows = db
    .prepare(
      `SELECT t.code, f.name, l.value_num, l.value_text FROM treatment_level l
       JOIN treatment t ON t.id = l.treatment_id JOIN factor f ON f.id = l.factor_id WHERE t.protocol_id = ?`,
    )
    .all(pid) as (StoredLevel & { code: string; name: string })[];
  for (const r of levelRows) storedLevels.get(r.code)?.set(r.name, levelFromColumns(r));

  const insertTreatment = db.prepare('INSERT INTO treatment (protocol_id, code, label) VALUES (?, ?, ?)');
  const insertLevel = db.prepare('INSERT INTO treatment_level (treatment_id, factor_id, value_num, value_text) VALUES (?, ?, ?, ?)');
  let newTreatments = 0;
  for (const t of part.treatments) {
    const encoded = part.factors.map((f) => {
      const cols = levelToColumns(f, t.levels[f.name]);
      if (cols === null) {
        throw new ImportRefusedError('inconsistent-table', `treatment "${t.code}" has level ${describeLevel(t.levels[f.name] ?? null)} for numeric factor "${f.name}"`, {
          treatment: t.code,
          factor: f.name,
        });
      }
      return { factor: f, cols };
    });
    const stored = storedLevels.get(t.code);
    if (stored) {
      for (const { factor, cols } of encoded) {
        const was = stored.get(factor.name) ?? null;
        const now = levelFromColumns(cols);
        if (!sameLevel(was, now)) {
          const row = part.plots?.find((p) => p.treatment === t.code)?.sourceRow;
          const where = part.file === undefined ? 'the file' : `${part.file}${row === undefined ? '' : `, row ${row}`}`;
          throw new ImportRefusedError(
            'treatment-conflict',
            `${where}: treatment "${t.code}" has ${factor.name} = ${describeLevel(now)} in the file but ${describeLevel(was)} in the workspace (protocol "${part.protocol}"); correct the file or give the treatment another code`,
            { treatment: t.code, factor: factor.name, stored: was, file: now, fileName: part.file, row },
          );
        }
      }
      continue;
    }
    const id = Number(insertTreatment.run(pid, t.code, t.label ?? null).lastInsertRowid);
    for (const { factor, cols } of encoded) insertLevel.run(id, factors.get(factor.name)!.id, cols.value_num, cols.value_text);
    treatmentIds.set(t.code, id);
    newTreatments++;
  }
  return { protocolId: pid, treatmentIds, newTreatments };
}
