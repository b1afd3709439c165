// Where each mapped column sits in the header; a mapped column that is not there is the
// first problem a user must fix, reported on the header row.
import type { ImportMapping } from './types.js';
import type { ProblemList } from './problems.js';

export interface NamedColumn {
  /** Factor or covariate name. */
  readonly name: string;
  /** Header text of the column. */
  readonly column: string;
  readonly index: number;
}

export interface PlotColumns {
  readonly trial: number;
  readonly site: number;
  readonly year: number;
  readonly block: number;
  readonly treatment: number;
  readonly response: number;
  readonly row: number;
  readonly col: number;
  readonly design: number;
  readonly trait: number;
  readonly plot: number;
  readonly factors: readonly NamedColumn[];
  readonly covariates: readonly NamedColumn[];
  /** Header text per index, for messages. */
  readonly header: readonly string[];
}

/** The header's names for a message, cut short when a damaged file has thousands of cells. */
export function listHeader(header: readonly string[]): string {
  const shown = header.slice(0, 30).map((h) => `"${h.length > 40 ? `${h.slice(0, 37)}...` : h}"`);
  return header.length > 30 ? `${shown.join(', ')} and ${header.length - 30} more` : shown.join(', ');
}

/** Index of `name` in the header: exact match first, then a unique case-insensitive match. */
export function findColumn(header: readonly string[], name: string): number {
  const exact = header.indexOf(name.trim());
  if (exact >= 0) return exact;
  const lower = name.trim().toLowerCase();
  const matches = header.flatMap((h, i) => (h.toLowerCase() === lower ? [i] : []));
  return matches.length === 1 ? matches[0] : -1;
}

/** Resolves every column the mapping names; adds a problem for each one missing or doubled. */
export function resolveColumns(header: readonly string[], headerRow: number, mapping: ImportMapping, problems: ProblemList, sheets?: { read: string; all: readonly string[] }): PlotColumns | null {
  let ok = true;
  const c = mapping.columns;
  // A workbook whose first sheet holds notes or a cover page: say so first, before the list of
  // columns it lacks, and name the sheets there are.
  const named = [c.trial, c.site, c.year, c.block, c.treatment, c.response, c.row, c.col, c.design, c.trait, c.plot, ...Object.values(c.factors ?? {}), ...(c.covariates ?? [])];
  const missing = named.filter((n) => n !== undefined && findColumn(header, n) < 0).length;
  if (missing > 0 && sheets !== undefined && sheets.all.length > 1) {
    const others = sheets.all.filter((s) => s !== sheets.read);
    const fit = others.find((s) => /data|plot|yield|trial/i.test(s)) ?? others[0];
    problems.add(headerRow, null, sheets.read, 'wrong-sheet', `${missing} mapped column${missing > 1 ? 's are' : ' is'} not on sheet "${sheets.read}"${mapping.sheet === undefined ? ' (the workbook\'s first sheet, read when the mapping names none)' : ''}; the workbook also has ${others.map((s) => `"${s}"`).join(', ')}: choose the sheet with "sheet": "${fit}" in the mapping`);
  }
  const locate = (key: string, name: string | undefined): number => {
    if (name === undefined) return -1;
    const index = findColumn(header, name);
    if (index < 0) {
      ok = false;
      problems.add(headerRow, name, null, 'missing-column', `column "${name}" (mapping key ${key}) is not in the header; the header has: ${listHeader(header)}`);
      return -1;
    }
    if (header.indexOf(header[index], index + 1) >= 0) {
      ok = false;
      problems.add(headerRow, name, null, 'duplicate-column', `column "${name}" (mapping key ${key}) appears more than once in the header`);
    }
    return index;
  };
  const resolved: PlotColumns = {
    trial: locate('columns.trial', c.trial),
    site: locate('columns.site', c.site),
    year: locate('columns.year', c.year),
    block: locate('columns.block', c.block),
    treatment: locate('columns.treatment', c.treatment),
    response: locate('columns.response', c.response),
    row: locate('columns.row', c.row),
    col: locate('columns.col', c.col),
    design: locate('columns.design', c.design),
    trait: locate('columns.trait', c.trait),
    plot: locate('columns.plot', c.plot),
    factors: Object.entries(c.factors ?? {}).map(([name, column]) => ({ name, column, index: locate(`columns.factors.${name}`, column) })),
    covariates: (c.covariates ?? []).map((column, i) => ({ name: column, column, index: locate(`columns.covariates.${i}`, column) })),
    header,
  };
  return ok ? resolved : null;
}
