// The first look at a data file before any mapping: its sheets, header, first rows and a
// guessed mapping. Nothing is validated or stored here.
import { readFile } from 'node:fs/promises';
import { CsvRecordReader, detectDelimiter } from '../../intake/csv.js';
import { decodeText, looksLikeOldExcel, looksLikeZip } from '../../intake/text.js';
import { listXlsxSheets, readXlsxSheet } from '../../intake/xlsx.js';
import { ManyfieldError } from '../result.js';
import { guessMapping, type MappingGuess } from './guessMapping.js';

export const PREVIEW_ROWS = 20;

export interface FilePreview {
  readonly format: 'csv' | 'xlsx';
  /** Worksheet names in workbook order; [] for CSV. */
  readonly sheets: string[];
  /** The worksheet shown; null for CSV. */
  readonly sheet: string | null;
  readonly header: string[];
  /** The first data rows (up to 20); empty cells are null. */
  readonly rows: (string | null)[][];
  /** Data rows after the header (blank rows not counted). */
  readonly rowCount: number;
  readonly guess: MappingGuess;
}

export async function previewFile(file: string, displayName: string, sheet?: string): Promise<FilePreview> {
  let bytes: Buffer;
  try {
    bytes = await readFile(file);
  } catch (e) {
    throw new ManyfieldError('not-found', `cannot read "${displayName}": ${(e as Error).message}`, { file: displayName });
  }
  if (looksLikeOldExcel(bytes)) throw new ManyfieldError('invalid-input', `"${displayName}" is an old binary Excel (.xls) file: save it as .xlsx or CSV`, { file: displayName });
  if (looksLikeZip(bytes) || /\.xls[xm]$/i.test(displayName)) return previewXlsx(bytes, displayName, sheet);
  return previewCsv(decodeText(bytes));
}

const cell = (text: string): string | null => (text.trim() === '' ? null : text.trim());

function previewCsv(text: string): FilePreview {
  const reader = new CsvRecordReader(text, detectDelimiter(text, false));
  const header: string[] = [];
  while (reader.next(header) !== 0 && header.every((h) => h.trim() === ''));
  const rows: (string | null)[][] = [];
  let rowCount = 0;
  const record: string[] = [];
  while (reader.next(record) !== 0) {
    if (record.every((c) => c.trim() === '')) continue;
    rowCount++;
    if (rows.length < PREVIEW_ROWS) rows.push(record.map(cell));
  }
  const names = header.map((h) => h.trim());
  return { format: 'csv', sheets: [], sheet: null, header: names, rows, rowCount, guess: guessMapping(names) };
}

function previewXlsx(bytes: Uint8Array, displayName: string, sheet: string | undefined): FilePreview {
  try {
    const sheets = listXlsxSheets(bytes);
    const data = readXlsxSheet(bytes, sheet);
    const [first, ...rest] = data.rows.filter((r) => r.cells.some((c) => c.trim() !== ''));
    const header = (first?.cells ?? []).map((h) => h.trim());
    return {
      format: 'xlsx',
      sheets,
      sheet: data.sheetName,
      header,
      rows: rest.slice(0, PREVIEW_ROWS).map((r) => r.cells.map(cell)),
      rowCount: rest.length,
      guess: guessMapping(header),
    };
  } catch (e) {
    throw new ManyfieldError('invalid-input', `"${displayName}" cannot be read as a workbook: ${(e as Error).message}`, { file: displayName, sheet: sheet ?? null });
  }
}
