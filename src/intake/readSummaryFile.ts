// Per-trial summaries (one estimate and its standard error per trial) for pooling without
// plot data; same reader and the same style of problems as plot files.
import type { ColumnsSpec } from '../spec/analysisSpec.js';
import { isMissingText, parseDecimal } from './numbers.js';
import { findColumn, listHeader } from './plotColumns.js';
import { DEFAULT_MAX_PROBLEMS, ProblemList } from './problems.js';
import { openRowSource, type SourceOptions } from './rowSource.js';

export interface SummaryRow {
  trial: string;
  estimate: number;
  se: number;
  df: number | null;
  covariates: Record<string, number | string | null>;
}

export interface ReadSummaryOptions extends SourceOptions {
  readonly maxProblems?: number;
}

export async function readSummaryFile(filePath: string, columns: ColumnsSpec, options: ReadSummaryOptions = {}): Promise<SummaryRow[]> {
  const problems = new ProblemList(filePath, options.maxProblems ?? DEFAULT_MAX_PROBLEMS);
  const need = (key: 'trial' | 'estimate' | 'se'): void => {
    if (columns[key] === undefined) problems.add(0, `columns.${key}`, null, 'mapping-incomplete', `pooling a summary file needs columns.${key}`);
  };
  need('trial');
  need('estimate');
  need('se');
  problems.throwIfAny();
  const { source } = await openRowSource(filePath, options);
  if (source === null) {
    problems.add(0, null, null, 'empty-file', 'the file is empty: no header row and no data rows');
    problems.throwIfAny();
    return [];
  }
  const locate = (key: string, name: string | undefined): number => {
    if (name === undefined) return -1;
    const i = findColumn(source.header, name);
    if (i < 0) problems.add(source.headerRow, name, null, 'missing-column', `column "${name}" (${key}) is not in the header; the header has: ${listHeader(source.header)}`);
    return i;
  };
  const trialAt = locate('columns.trial', columns.trial);
  const estimateAt = locate('columns.estimate', columns.estimate);
  const seAt = locate('columns.se', columns.se);
  const dfAt = locate('columns.df', columns.df);
  const covariates = (columns.covariates ?? []).map((name, i) => ({ name, index: locate(`columns.covariates.${i}`, name) }));
  problems.throwIfAny();

  const mode = source.decimalMode;
  const rows: SummaryRow[] = [];
  const rawCovariates: string[][] = [];
  const firstRowOf = new Map<string, number>();
  const cells = source.cells;
  for (let rowNo = source.next(); rowNo !== 0 && !problems.full; rowNo = source.next()) {
    let blank = true;
    for (let i = 0; i < cells.count; i++) if (!cells.isEmpty(i)) blank = false;
    if (blank) continue;
    const cell = (i: number): string => cells.text(i);
    const number = (i: number, what: string): number => {
      const text = cell(i);
      if (isMissingText(text)) {
        problems.add(rowNo, source.header[i], text, 'missing-value', `the ${what} is empty`);
        return NaN;
      }
      const v = parseDecimal(text, mode);
      if (!Number.isFinite(v)) problems.add(rowNo, source.header[i], text, 'not-a-number', `the ${what} must be a number`);
      return v;
    };
    const trial = cell(trialAt);
    if (trial === '') problems.add(rowNo, source.header[trialAt], '', 'missing-value', 'the trial is empty');
    const earlier = firstRowOf.get(trial);
    if (trial !== '' && earlier !== undefined) problems.add(rowNo, source.header[trialAt], trial, 'duplicate-trial', `trial "${trial}" already has a row (row ${earlier})`);
    firstRowOf.set(trial, earlier ?? rowNo);
    const estimate = number(estimateAt, 'estimate');
    const se = number(seAt, 'standard error');
    if (Number.isFinite(se) && !(se > 0)) problems.add(rowNo, source.header[seAt], cell(seAt), 'se-not-positive', 'the standard error must be greater than zero');
    let df: number | null = null;
    if (dfAt >= 0 && !isMissingText(cell(dfAt))) {
      df = parseDecimal(cell(dfAt), mode);
      if (!(df > 0) || !Number.isFinite(df)) problems.add(rowNo, source.header[dfAt], cell(dfAt), Number.isNaN(df) ? 'not-a-number' : 'df-not-positive', 'the degrees of freedom must be a number greater than zero');
    }
    rows.push({ trial, estimate, se, df, covariates: {} });
    rawCovariates.push(covariates.map((c) => cell(c.index)));
  }
  source.finish(problems);
  if (rows.length === 0) problems.add(0, null, null, 'empty-file', 'the file has a header but no data rows');
  problems.throwIfAny();
  // A covariate column is numeric when every non-empty cell is a number.
  covariates.forEach((c, k) => {
    const numeric = rawCovariates.every((r) => r[k] === '' || !Number.isNaN(parseDecimal(r[k], mode)));
    rows.forEach((row, i) => {
      const raw = rawCovariates[i][k];
      row.covariates[c.name] = raw === '' ? null : numeric ? parseDecimal(raw, mode) : raw;
    });
  });
  return rows;
}
