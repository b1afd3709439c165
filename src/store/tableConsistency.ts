// The store trusts intake's validation of values, but not blindly its bookkeeping: trial keys,
// treatment codes and traits listed once, the control among the treatments.
import type { ParsedPlotTable } from '../intake/types.js';
import { ImportRefusedError } from './errors.js';

const DESIGNS = new Set(['completely-randomised', 'randomised-blocks', 'latin-square', 'row-column']);

export function refuseInconsistent(message: string, details?: unknown): never {
  throw new ImportRefusedError('inconsistent-table', `${message}; this is a fault in the reader, please report it`, details);
}

export function checkTableConsistency(table: ParsedPlotTable): void {
  if (!/^[0-9a-fA-F]{64}$/.test(table.sha256)) refuseInconsistent(`"${table.file}" has no valid SHA-256`);
  const trialKeys = new Set<string>();
  for (const t of table.trials) {
    if (trialKeys.has(t.key)) refuseInconsistent(`trial key "${t.key}" appears twice`);
    if (!Number.isInteger(t.year)) refuseInconsistent(`trial "${t.key}" has year ${t.year}`);
    if (!DESIGNS.has(t.design)) refuseInconsistent(`trial "${t.key}" has design "${t.design}"`);
    trialKeys.add(t.key);
  }
  const codes = new Set(table.treatments.map((t) => t.code));
  if (codes.size !== table.treatments.length) refuseInconsistent('a treatment code is listed twice');
  if (table.control !== null && !codes.has(table.control)) refuseInconsistent(`control "${table.control}" is not among the treatments`);
  const traitNames = new Set(table.traits.map((t) => t.name));
  if (traitNames.size !== table.traits.length) refuseInconsistent('a trait is listed twice');

  // Plots and observations are checked row by row while they are written (importTable.ts).
}
