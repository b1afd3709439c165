// Entry points for plot files: read (CSV or XLSX), validate every row, convert units, and
// return the table the store writes or the engine analyses. All-or-nothing: any problem
// throws an IntakeError listing every problem found (up to maxProblems).
import type { AnalysisSpec } from '../spec/analysisSpec.js';
import { parseMapping } from './mapping.js';
import { resolveColumns } from './plotColumns.js';
import { PlotTableBuilder, type PlotTableSummary } from './plotTableBuilder.js';
import { PlotListSink, type PlotSink } from './plotSink.js';
import { DEFAULT_MAX_PROBLEMS, ProblemList } from './problems.js';
import { openRowSource } from './rowSource.js';
import { IntakeError, type ImportMapping, type IntakeProblem, type ParsedPlotTable, type ParsedTrait } from './types.js';
import { screenPlausibility } from './plausibility.js';

export interface ReadPlotOptions {
  /** Called now and then with the share of the file read (0..1), and with 1 at the end. */
  readonly onProgress?: (fraction: number) => void;
  /** Stop listing problems after this many (default 200); the error then says it was truncated. */
  readonly maxProblems?: number;
}

/** Rows between progress reports; the reader also yields to the event loop there. */
const PROGRESS_EVERY = 1 << 16;

export async function readPlotFile(filePath: string, given: ImportMapping, options: ReadPlotOptions = {}): Promise<ParsedPlotTable> {
  // Checked again here: a mapping built in code has not been through readMappingFile.
  const mapping = parseMapping(given, filePath);
  const sink = new PlotListSink();
  const { summary: s, sha256 } = await readPlotRows(filePath, mapping, sink, options);
  return {
    file: filePath,
    sha256,
    rowsRead: s.rowsRead,
    protocol: s.protocol,
    control: s.control,
    traits: s.traits,
    factors: s.factors,
    treatments: s.treatments,
    trials: s.trials,
    plots: sink.plots,
    observations: sink.observations,
    trialCovariates: s.trialCovariates,
    mapping: s.mapping,
    warnings: screenListedPlots(filePath, mapping, sink, s.traits),
  };
}

/** The plausibility screen over the plots and values a PlotListSink holds. */
function screenListedPlots(filePath: string, mapping: ImportMapping, sink: PlotListSink, traits: readonly ParsedTrait[]): IntakeProblem[] {
  const groups = new Map<string, { trial: string; trait: string; values: number[]; rows: number[] }>();
  for (const o of sink.observations) {
    if (o.value === null) continue;
    const plot = sink.plots[o.plot];
    const key = `${plot.trialKey}\u0000${o.trait}`;
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { trial: plot.trialKey, trait: o.trait, values: [], rows: [] }));
    g.values.push(o.value);
    g.rows.push(plot.sourceRow);
  }
  const units = new Map(traits.map((t) => [t.name, t.unit]));
  return screenPlausibility(groups.values(), filePath, mapping.columns.response ?? 'value', (t) => units.get(t) ?? '');
}

/**
 * Reads and validates every row of a plot file into `sink`; returns the whole-file summary
 * and the file's SHA-256. `mapping` must have been through parseMapping.
 */
export async function readPlotRows(filePath: string, mapping: ImportMapping, sink: PlotSink, options: ReadPlotOptions = {}): Promise<{ summary: PlotTableSummary; sha256: string }> {
  const problems = new ProblemList(filePath, options.maxProblems ?? DEFAULT_MAX_PROBLEMS);
  const { source, sha256 } = await openRowSource(filePath, mapping);
  if (source === null) {
    problems.add(0, null, null, 'empty-file', 'the file is empty: no header row and no data rows');
    problems.throwIfAny();
    throw new Error('unreachable');
  }
  const cols = resolveColumns(source.header, source.headerRow, mapping, problems, source.sheets);
  if (cols === null) {
    problems.throwIfAny();
    throw new Error('unreachable');
  }
  const builder = new PlotTableBuilder(cols, mapping, source.decimalMode, problems, sink);
  // The first report comes after the first row: the loop's optimised code then has seen the
  // report branch, instead of being thrown away when the branch is first taken mid-file.
  let sinceReport = PROGRESS_EVERY - 1;
  for (;;) {
    const rowNo = source.next();
    if (rowNo === 0) break;
    builder.addRow(source.cells, rowNo);
    if (problems.full) {
      // Further rows could only add problems we are not allowed to list.
      if (source.next() !== 0) problems.truncated = true;
      break;
    }
    if (++sinceReport === PROGRESS_EVERY) {
      sinceReport = 0;
      options.onProgress?.(source.fraction());
      await new Promise<void>((resolve) => setImmediate(resolve));
    }
  }
  source.finish(problems);
  const summary = builder.finish();
  options.onProgress?.(1);
  return { summary, sha256 };
}

/**
 * Reads a plot file for `manyfield analyze --data F --spec S`: the mapping comes from the
 * spec's columns, the trait keeps its file unit ("as-is").
 */
export async function readDataForAnalysis(filePath: string, spec: AnalysisSpec): Promise<{ table: ParsedPlotTable }> {
  return { table: await readPlotFile(filePath, analysisMapping(filePath, spec)) };
}

/** The mapping an analysis spec's columns describe; the trait keeps its file unit ("as-is"). */
export function analysisMapping(filePath: string, spec: AnalysisSpec): ImportMapping {
  const columns = spec.columns;
  if (columns === undefined) {
    throw new IntakeError([{ file: filePath, row: 0, column: 'columns', value: null, rule: 'mapping-incomplete', message: 'the spec must have a "columns" object saying which column of the data file is what' }]);
  }
  const reading = spec.reading ?? {};
  return columns.trait !== undefined
    ? { columns, control: spec.control, ...reading }
    : { columns, trait: { name: spec.trait ?? columns.response ?? 'value', unit: 'as-is' }, control: spec.control, ...reading };
}
