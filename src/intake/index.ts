// Public face of intake: readers for plot files, mapping files and per-trial summaries.
export { readPlotFile, readDataForAnalysis, type ReadPlotOptions } from './readPlotFile.js';
export { readNetworkForAnalysis, specHasOneRowPerPlot } from './readNetworkFile.js';
export { readMappingFile, parseMapping, checkMapping } from './mapping.js';
export { readSummaryFile, type SummaryRow, type ReadSummaryOptions } from './readSummaryFile.js';
export { toCanonical, conversionFactor, findUnit, UNIT_TABLE, BUSHEL_WEIGHTS, KG_PER_LB, HA_PER_ACRE } from './units.js';
export { IntakeError, formatProblems, importMappingSchema } from './types.js';
export type { ImportMapping, IntakeProblem, ParsedPlotTable, ParsedPlot, ParsedTrial, ParsedTrait, ParsedObservation } from './types.js';
