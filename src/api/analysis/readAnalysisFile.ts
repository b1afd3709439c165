// The network of a plot file named by `analyze --data`, read as the spec maps it: one row per
// plot, or a file with a trait column (read as a table, then one trait taken). Used where the
// analysis runs — the analysis worker reads the file itself, so the network is not copied to it.
import { readDataForAnalysis, readNetworkForAnalysis, specHasOneRowPerPlot, type IntakeProblem } from '../../intake/index.js';
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { ManyfieldError } from '../result.js';
import { networkFromTable } from './networkFromTable.js';

export interface ReadAnalysisFile {
  readonly network: NetworkInput;
  readonly sha256: string;
  readonly warnings: readonly IntakeProblem[];
}

export async function readAnalysisFile(file: string, spec: AnalysisSpec): Promise<ReadAnalysisFile> {
  return specHasOneRowPerPlot(spec) ? readNetworkForAnalysis(file, spec) : readLongFile(file, spec);
}

/** A file with a trait column (one row per plot and trait): read as a table, then one trait taken. */
async function readLongFile(file: string, spec: AnalysisSpec): Promise<ReadAnalysisFile> {
  const { table } = await readDataForAnalysis(file, spec);
  const trait = spec.trait ?? table.traits[0]?.name;
  if (!trait) throw new ManyfieldError('invalid-input', `${file} holds no trait values`);
  return { network: networkFromTable(table, trait), sha256: table.sha256, warnings: (table.warnings ?? []).filter((w) => w.message.startsWith(`${trait} `)) };
}
