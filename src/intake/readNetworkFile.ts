// `manyfield analyze --data F --spec S` on a file with one row per plot: the rows go through
// the same PlotTableBuilder checks as an import, but land directly in the engine's plot columns.
import type { NetworkInput } from '../engine/types.js';
import type { AnalysisSpec } from '../spec/analysisSpec.js';
import { assembleNetwork } from './analysisNetwork.js';
import { parseMapping } from './mapping.js';
import { analysisMapping, readPlotRows, type ReadPlotOptions } from './readPlotFile.js';
import { ColumnarPlotsSink } from './columnarPlotsSink.js';
import { screenPlausibility } from './plausibility.js';
import type { IntakeProblem } from './types.js';

/** True when the spec's file has one row per plot (no trait column), the case readNetworkForAnalysis reads. */
export function specHasOneRowPerPlot(spec: AnalysisSpec): boolean {
  return spec.columns?.trait === undefined;
}

/**
 * The network an analysis of a one-row-per-plot file works on, and the file's SHA-256.
 * Problems are the IntakeError readDataForAnalysis would throw, row for row.
 */
export async function readNetworkForAnalysis(filePath: string, spec: AnalysisSpec, options: ReadPlotOptions = {}): Promise<{ network: NetworkInput; sha256: string; warnings: IntakeProblem[] }> {
  if (!specHasOneRowPerPlot(spec)) throw new Error('readNetworkForAnalysis: a file with a trait column is read with readDataForAnalysis');
  const mapping = parseMapping(analysisMapping(filePath, spec), filePath);
  const sink = new ColumnarPlotsSink();
  const { summary, sha256 } = await readPlotRows(filePath, mapping, sink, options);
  // Without a trait column the mapping declares exactly one trait, the one every row holds.
  const trait = summary.traits[0];
  const byTrial = sink.plotsByTrial();
  const groups = [...byTrial].map(([trial, c]) => ({
    trial,
    trait: trait.name,
    values: c.table.value.subarray(c.start, c.start + c.count),
    rows: c.table.sourceRow.subarray(c.start, c.start + c.count),
  }));
  const warnings = screenPlausibility(groups, filePath, mapping.columns.response ?? 'value', () => trait.unit);
  return { network: assembleNetwork(summary, trait, byTrial), sha256, warnings };
}
