// One interface over CSV and XLSX: a header and then data rows of cell text, pulled one at a
// time into a reused array, each with the row number a spreadsheet would show.
import { readFile, stat } from 'node:fs/promises';
import { createHash } from 'node:crypto';
import { CsvRecordReader, detectDelimiter } from './csv.js';
import type { DecimalMode } from './numbers.js';
import { failWith, type ProblemList } from './problems.js';
import { IntakeError } from './types.js';
import { StringCells, type RowCells } from './rowCells.js';
import { decodeText, InvalidUtf8Error, looksLikeOldExcel, looksLikeZip, type TextEncodingName } from './text.js';
import { readXlsxSheet, type SheetRow } from './xlsx.js';

export interface RowSource {
  readonly header: readonly string[];
  /** Row number of the header (1 for CSV; the first non-empty row of a sheet). */
  readonly headerRow: number;
  /** How numbers in cells are written. */
  readonly decimalMode: DecimalMode;
  /** The current row's cells, valid until the next call of next(). */
  readonly cells: RowCells;
  /** Moves to the next row and returns its row number; 0 at the end. */
  next(): number;
  fraction(): number;
  /** A workbook's sheets: the one read and all of them (undefined for CSV). */
  readonly sheets?: { readonly read: string; readonly all: readonly string[] };
  /** Called once the rows are exhausted: adds structural problems (an unclosed quote). */
  finish(problems: ProblemList): void;
}

export interface SourceOptions {
  readonly delimiter?: string;
  readonly decimalComma?: boolean;
  readonly sheet?: string;
  /** Text encoding of a delimited file; unset = a byte-order mark, else UTF-8 (checked). */
  readonly encoding?: TextEncodingName;
}

/**
 * Largest file read: the whole file becomes one string, and a JavaScript string holds at most
 * about 512 million characters, so larger files are refused before anything is read.
 */
export const MAX_PLOT_FILE_BYTES = 500 * 1024 * 1024;

const ENCODING_ADVICE = 'save it as UTF-8, or name its encoding in the mapping ("encoding": "latin-1", "windows-1252" or "utf-16")';

export interface LoadedSource {
  readonly source: RowSource | null; // null: the file has no header row at all
  readonly sha256: string;
}

/** Reads a file, hashes it and opens it as CSV or XLSX (by content, then by extension). */
export async function openRowSource(filePath: string, options: SourceOptions): Promise<LoadedSource> {
  let bytes: Buffer;
  try {
    const info = await stat(filePath);
    if (info.isDirectory()) failWith(filePath, 'file-unreadable', 'this is a folder, not a data file; give the path of a CSV or XLSX file');
    if (info.size > MAX_PLOT_FILE_BYTES) {
      failWith(filePath, 'file-too-large', `the file is ${(info.size / 1048576).toFixed(0)} MB; at most ${MAX_PLOT_FILE_BYTES / 1048576} MB are read in one import — split it (by year or by site) and import the parts`);
    }
    bytes = await readFile(filePath);
  } catch (e) {
    if (e instanceof IntakeError) throw e;
    failWith(filePath, 'file-unreadable', `cannot read the file: ${(e as Error).message}`);
  }
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  if (looksLikeOldExcel(bytes)) failWith(filePath, 'unsupported-format', 'this is an old binary Excel (.xls) file: save it as .xlsx or CSV and import that');
  const isXlsx = looksLikeZip(bytes) || /\.xls[xm]$/i.test(filePath);
  const source = isXlsx ? openXlsx(filePath, bytes, options) : openCsv(decodeOrRefuse(filePath, bytes, options.encoding), options);
  return { source, sha256 };
}

function decodeOrRefuse(filePath: string, bytes: Uint8Array, encoding: TextEncodingName | undefined): string {
  try {
    return decodeText(bytes, encoding);
  } catch (e) {
    if (!(e instanceof InvalidUtf8Error)) throw e;
    throw new IntakeError([
      { file: filePath, row: e.line, column: null, value: null, rule: 'bad-encoding', message: `${e.message} (byte offset ${e.offset} of the file); ${ENCODING_ADVICE}` },
    ]);
  }
}

export function openCsv(text: string, options: SourceOptions): RowSource | null {
  const decimalComma = options.decimalComma === true;
  const delimiter = options.delimiter ?? detectDelimiter(text, decimalComma);
  const reader = new CsvRecordReader(text, delimiter);
  const header: string[] = [];
  let headerRow = 0;
  // The header is the first record with any non-empty cell.
  for (;;) {
    const r = reader.next(header);
    if (r === 0) return null;
    if (header.some((h) => h !== '')) {
      headerRow = r;
      break;
    }
  }
  return new CsvRowSource(reader, header.map((h) => h.trim()), headerRow, decimalComma ? 'comma' : 'point');
}

class CsvRowSource implements RowSource {
  constructor(
    private readonly reader: CsvRecordReader,
    readonly header: readonly string[],
    readonly headerRow: number,
    readonly decimalMode: DecimalMode,
  ) {}

  get cells(): RowCells {
    return this.reader;
  }

  /** The last record with any content: its number and cell count (a cut-off last line is short). */
  private lastFilled = 0;
  private lastFilledCount = 0;

  next(): number {
    const r = this.reader.advance();
    if (r !== 0 && (this.reader.count > 1 || !this.reader.isEmpty(0))) {
      this.lastFilled = r;
      this.lastFilledCount = this.reader.count;
    }
    return r;
  }

  fraction(): number {
    return this.reader.fraction();
  }

  finish(problems: ProblemList): void {
    if (this.lastFilled > 0 && this.lastFilledCount < this.header.length && this.reader.unterminatedQuoteRecord === 0) {
      problems.add(
        this.lastFilled,
        null,
        null,
        'cut-off-row',
        `the last row has ${this.lastFilledCount} cells but the header has ${this.header.length}: the file looks cut off (an interrupted copy or download); restore the complete file, or remove the row`,
      );
    }
    if (this.reader.unterminatedQuoteRecord > 0) {
      problems.add(this.reader.unterminatedQuoteRecord, null, null, 'unclosed-quote', 'a quoted field opened on this row is never closed, so the rest of the file was read as one cell');
    }
  }
}

function openXlsx(filePath: string, bytes: Uint8Array, options: SourceOptions): RowSource | null {
  let rows: SheetRow[];
  let sheets: { read: string; all: readonly string[] };
  try {
    const data = readXlsxSheet(bytes, options.sheet);
    rows = data.rows;
    sheets = { read: data.sheetName, all: data.sheetNames };
  } catch (e) {
    // Any failure of a damaged workbook is reported as a problem of the file, never a crash.
    failWith(filePath, 'bad-xlsx', (e as Error).message, null, options.sheet ?? null);
  }
  if (rows.length === 0) return null;
  let k = 1;
  const cells = new StringCells();
  return {
    header: rows[0].cells.map((h) => h.trim()),
    headerRow: rows[0].row,
    decimalMode: options.decimalComma === true ? 'either' : 'point',
    sheets,
    cells,
    next() {
      if (k >= rows.length) return 0;
      const row = rows[k++];
      cells.cells = row.cells.map((c) => c.trim());
      return row.row;
    },
    fraction: () => (rows.length <= 1 ? 1 : (k - 1) / (rows.length - 1)),
    finish() {},
  };
}
