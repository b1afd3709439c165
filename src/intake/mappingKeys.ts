// Every key of a mapping file, described once: `manyfield import --help` prints this list and the
// README's table says the same. A key added to the schema without a line here fails a test.

export interface MappingKeyDoc {
  readonly key: string;
  readonly meaning: string;
}

export const MAPPING_KEYS: readonly MappingKeyDoc[] = [
  { key: 'columns.site', meaning: 'site code column' },
  { key: 'columns.year', meaning: 'year column (four digits)' },
  { key: 'columns.trial', meaning: 'trial column; without it a trial is a site and year' },
  { key: 'columns.treatment', meaning: 'treatment code column (required)' },
  { key: 'columns.response', meaning: 'the value column (required)' },
  { key: 'columns.plot', meaning: "the field's own plot label (\"204\"): stored, shown in flags and exports, used by exclusions; also catches a plot listed twice" },
  { key: 'columns.block', meaning: 'block (replicate) column' },
  { key: 'columns.row, columns.col', meaning: 'field row and column of the plot (whole numbers)' },
  { key: 'columns.design', meaning: 'design column: completely-randomised, randomised-blocks, latin-square, row-column' },
  { key: 'columns.factors', meaning: '{"rate": "N_rate", "timing": "time"}: factor name -> column; numbers make a numeric factor, an empty cell is "not applicable"' },
  { key: 'columns.covariates', meaning: '["pH", "rain_mm"]: trial covariate columns (one value per trial), for moderators and covariate slopes' },
  { key: 'columns.trait', meaning: 'trait-name column, for files with one row per plot and trait (list them under "traits")' },
  { key: 'trait', meaning: '{name, unit, kind, lower, upper}: the trait of the response column; unit t/ha, kg/ha, lb/ac, bu/ac, %, count ...; kind continuous | percent | count; bounds in the file unit refuse values outside them' },
  { key: 'traits', meaning: 'a list of trait objects, with columns.trait' },
  { key: 'control', meaning: "the untreated control's treatment code" },
  { key: 'controlLevels', meaning: '{"rate": 0}: the control\'s level of a numeric factor when its cell is blank (default 0: it received none of the input; null = not applicable)' },
  { key: 'treatments', meaning: '["CTL", "A1", ...]: when given, every treatment code must be one of these' },
  { key: 'factorUnits', meaning: '{"rate": "kg/ha"}: unit of a numeric factor (lb/ac converts to kg/ha)' },
  { key: 'crop', meaning: 'crop name (wheat, maize, soybean ...): needed for bushel units and stored with the trials' },
  { key: 'design', meaning: 'design of every trial when the file has no design column' },
  { key: 'protocol', meaning: 'protocol name (default "default"): files of one protocol share treatments and factors' },
  { key: 'sheet', meaning: 'XLSX: the sheet to read (default the first sheet)' },
  { key: 'decimalComma', meaning: 'true when numbers are written 12,4 (CSV then usually uses ";" between cells)' },
  { key: 'delimiter', meaning: 'CSV cell separator, one character (default: detected)' },
  { key: 'encoding', meaning: 'CSV text encoding when not UTF-8: latin-1, windows-1252, utf-16, utf-16le, utf-16be (without it, invalid UTF-8 is refused with its row and byte offset)' },
];

/** Cell text read as a missing value, besides an empty cell. */
export const MISSING_VALUE_WORDS = 'an empty cell, NA, n/a (any case), "." or "-"';

export function mappingHelp(): string {
  const width = Math.max(...MAPPING_KEYS.map((k) => k.key.length));
  return MAPPING_KEYS.map((k) => `  ${k.key.padEnd(width)}  ${k.meaning}`).join('\n');
}
