// A validated plot table (from a file) seen as the engine's network for one trait.
import type { NetworkInput, PlotObservation } from '../../engine/types.js';
import { assembleNetwork } from '../../intake/analysisNetwork.js';
import type { ParsedPlotTable } from '../../intake/types.js';
import { ManyfieldError } from '../result.js';

export function networkFromTable(table: ParsedPlotTable, trait: string): NetworkInput {
  const traitInfo = table.traits.find((t) => t.name === trait);
  if (!traitInfo) throw new ManyfieldError('invalid-argument', `trait "${trait}" is not in ${table.file} (traits: ${table.traits.map((t) => t.name).join(', ')})`);
  // One pass over the observations into a per-plot array (undefined = no value for this trait).
  const values: (number | null | undefined)[] = new Array(table.plots.length);
  for (const o of table.observations) if (o.trait === trait) values[o.plot] = o.value;
  const plotsByTrial = new Map<string, PlotObservation[]>();
  const plots = table.plots;
  for (let i = 0; i < plots.length; i++) {
    const value = values[i];
    if (value === undefined) continue;
    const p = plots[i];
    let list = plotsByTrial.get(p.trialKey);
    if (!list) plotsByTrial.set(p.trialKey, (list = []));
    list.push({ plotId: p.plotId ?? p.sourceRow, label: p.plotId ?? null, sourceRow: p.sourceRow, treatment: p.treatment, block: p.block, row: p.row, col: p.col, value });
  }
  return assembleNetwork(table, traitInfo, plotsByTrial);
}
