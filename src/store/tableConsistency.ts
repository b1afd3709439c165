// The store trusts intake's validation of values, but not blindly its bookkeeping: every plot
// must name a known trial and treatment, every observation a known plot and trait, once.
import type { ParsedPlotTable } from '../intake/types.js';
import { ImportRefusedError } from './errors.js';

const DESIGNS = new Set(['completely-randomised', 'randomised-blocks', 'latin-square', 'row-column']);

function refuse(message: string, details?: unknown): never {
  throw new ImportRefusedError('inconsistent-table', `${message}; this is a fault in the reader, please report it`, details);
}

export function checkTableConsistency(table: ParsedPlotTable): void {
  if (!/^[0-9a-f]{64}$/.test(table.sha256)) refuse(`"${table.file}" has no valid SHA-256`);
  const trialKeys = new Set<string>();
  for (const t of table.trials) {
    if (trialKeys.has(t.key)) refuse(`trial key "${t.key}" appears twice`);
    if (!Number.isInteger(t.year)) refuse(`trial "${t.key}" has year ${t.year}`);
    if (!DESIGNS.has(t.design)) refuse(`trial "${t.key}" has design "${t.design}"`);
    trialKeys.add(t.key);
  }
  const codes = new Set(table.treatments.map((t) => t.code));
  if (codes.size !== table.treatments.length) refuse('a treatment code is listed twice');
  if (table.control !== null && !codes.has(table.control)) refuse(`control "${table.control}" is not among the treatments`);
  const traitIndex = new Map(table.traits.map((t, i) => [t.name, i]));
  if (traitIndex.size !== table.traits.length) refuse('a trait is listed twice');

  for (const p of table.plots) {
    if (!trialKeys.has(p.trialKey)) refuse(`row ${p.sourceRow} names trial "${p.trialKey}", which is not in the trial list`);
    if (!codes.has(p.treatment)) refuse(`row ${p.sourceRow} names treatment "${p.treatment}", which is not in the treatment list`);
  }
  const nTraits = table.traits.length;
  const seen = new Uint8Array(table.plots.length * nTraits);
  for (const o of table.observations) {
    const t = traitIndex.get(o.trait);
    if (t === undefined) refuse(`an observation names trait "${o.trait}", which is not in the trait list`);
    if (!Number.isInteger(o.plot) || o.plot < 0 || o.plot >= table.plots.length) refuse(`an observation names plot ${o.plot}, out of range`);
    if (o.value !== null && !Number.isFinite(o.value)) refuse(`row ${table.plots[o.plot].sourceRow} has value ${o.value} for "${o.trait}"`);
    const slot = o.plot * nTraits + t;
    if (seen[slot]) refuse(`row ${table.plots[o.plot].sourceRow} has two values of "${o.trait}" for one plot`);
    seen[slot] = 1;
  }
}
