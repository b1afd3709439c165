// Reads one worksheet of an .xlsx workbook into rows of cell text: fflate unzips the parts,
// the small scanner in xml.ts reads workbook.xml, its relationships, the shared strings and
// the sheet. Numbers keep the text Excel stored ("12.5", "1E-3"); booleans become TRUE/FALSE.
import { unzipSync, strFromU8 } from 'fflate';
import { attrValue, decodeXmlText, scanXml, XmlFormatError } from './xml.js';

export class XlsxFormatError extends Error {}

export interface SheetRow {
  /** Row number as the spreadsheet shows it (the r attribute). */
  readonly row: number;
  readonly cells: string[];
}

export interface SheetData {
  readonly sheetName: string;
  readonly rows: SheetRow[];
}

/** Refuse archives that inflate beyond this: protects against zip bombs. */
const MAX_PART_BYTES = 1 << 30;
/** Refuse sheets whose rows, padded to their last cell, hold more cells than this. */
const MAX_SHEET_CELLS = 20_000_000;

function unzipParts(bytes: Uint8Array, wanted: (name: string) => boolean): Record<string, Uint8Array> {
  try {
    return unzipSync(bytes, {
      filter: (file) => {
        if (!wanted(file.name)) return false;
        if (file.originalSize > MAX_PART_BYTES) throw new XlsxFormatError(`part ${file.name} is too large`);
        return true;
      },
    });
  } catch (e) {
    if (e instanceof XlsxFormatError) throw e;
    throw new XlsxFormatError(`not a readable .xlsx (zip) file: ${(e as Error).message}`);
  }
}

function partText(parts: Record<string, Uint8Array>, name: string): string | undefined {
  const bytes = parts[name];
  return bytes === undefined ? undefined : strFromU8(bytes);
}

/** Resolves a relationship target against the folder of the part that owns it. */
function resolveTarget(ownerPath: string, target: string): string {
  if (target.startsWith('/')) return target.slice(1);
  const segments = ownerPath.split('/').slice(0, -1);
  for (const s of target.split('/')) {
    if (s === '..') segments.pop();
    else if (s !== '.' && s !== '') segments.push(s);
  }
  return segments.join('/');
}

function relsPathOf(partPath: string): string {
  const slash = partPath.lastIndexOf('/');
  return `${partPath.slice(0, slash + 1)}_rels/${partPath.slice(slash + 1)}.rels`;
}

function readRelationships(xml: string): Map<string, { type: string; target: string }> {
  const rels = new Map<string, { type: string; target: string }>();
  scanXml(xml, {
    open(name, attrs) {
      if (name !== 'Relationship') return;
      const id = attrValue(attrs, 'Id');
      const target = attrValue(attrs, 'Target');
      if (id !== undefined && target !== undefined) rels.set(id, { type: attrValue(attrs, 'Type') ?? '', target });
    },
    close() {},
    text() {},
  });
  return rels;
}

function readSheetList(xml: string): { name: string; relId: string }[] {
  const sheets: { name: string; relId: string }[] = [];
  scanXml(xml, {
    open(name, attrs) {
      if (name !== 'sheet') return;
      const sheetName = attrValue(attrs, 'name');
      const relId = attrValue(attrs, 'r:id') ?? relIdWithAnyPrefix(attrs);
      if (sheetName !== undefined && relId !== undefined) sheets.push({ name: sheetName, relId });
    },
    close() {},
    text() {},
  });
  return sheets;
}

/** Some writers bind the relationships namespace to a prefix other than "r". */
function relIdWithAnyPrefix(attrs: string): string | undefined {
  const m = /\s([A-Za-z_][\w.-]*):id\s*=\s*["']([^"']*)["']/.exec(` ${attrs}`);
  return m ? decodeXmlText(m[2]) : undefined;
}

/** Text of each <si>, joining rich-text runs and skipping phonetic (rPh) runs. */
function readSharedStrings(xml: string): string[] {
  const strings: string[] = [];
  let current: string | null = null;
  let inT = false;
  let phonetic = 0;
  scanXml(xml, {
    open(name, _attrs, selfClosing) {
      if (name === 'si') {
        current = '';
        if (selfClosing) {
          strings.push('');
          current = null;
        }
      } else if (name === 'rPh') {
        if (!selfClosing) phonetic++;
      } else if (name === 't' && !selfClosing) inT = true;
    },
    close(name) {
      if (name === 'si') {
        strings.push(current ?? '');
        current = null;
      } else if (name === 'rPh') phonetic = Math.max(0, phonetic - 1);
      else if (name === 't') inT = false;
    },
    text(src, start, end, isCdata) {
      if (inT && phonetic === 0 && current !== null) {
        const raw = src.slice(start, end);
        current += isCdata ? raw : decodeXmlText(raw);
      }
    },
  });
  return strings;
}

/** "AB12" -> 27 (0-based column); -1 when the reference has no letters. */
export function columnIndexOfRef(ref: string): number {
  let col = 0;
  let i = 0;
  for (; i < ref.length; i++) {
    const c = ref.charCodeAt(i) & ~32; // upper-case
    if (c < 65 || c > 90) break;
    col = col * 26 + (c - 64);
    if (col > 16384) return -1;
  }
  return i === 0 ? -1 : col - 1;
}

function readSheetRows(xml: string, shared: readonly string[]): SheetRow[] {
  const rows: SheetRow[] = [];
  let rowNumber = 0;
  let cells: string[] | null = null;
  let col = -1;
  let cellType = '';
  let cellText = '';
  let capture = false; // inside <v>, or a <t> of an inline string
  let inInline = false;
  let phonetic = 0;
  let cellBudget = MAX_SHEET_CELLS;
  const finishCell = (): void => {
    if (cells === null || col < 0) return;
    let value = cellText;
    if (cellType === 's') {
      const k = Number(cellText.trim());
      if (!Number.isInteger(k) || k < 0 || k >= shared.length) throw new XlsxFormatError(`row ${rowNumber}: shared string index "${cellText}" out of range`);
      value = shared[k];
    } else if (cellType === 'b') value = cellText.trim() === '1' ? 'TRUE' : 'FALSE';
    if (value === '') return;
    while (cells.length < col) cells.push('');
    cells[col] = value;
  };
  scanXml(xml, {
    open(name, attrs, selfClosing) {
      if (name === 'row') {
        const r = attrValue(attrs, 'r');
        const parsed = r === undefined ? rowNumber + 1 : Number(r);
        if (!Number.isInteger(parsed) || parsed <= rowNumber) throw new XlsxFormatError(`row number "${r}" out of order`);
        rowNumber = parsed;
        col = -1;
        cells = [];
        if (selfClosing) cells = null;
      } else if (name === 'c') {
        if (cells === null) throw new XlsxFormatError('cell outside a row');
        const ref = attrValue(attrs, 'r');
        const next = ref === undefined ? col + 1 : columnIndexOfRef(ref);
        if (next < 0 || next <= col) throw new XlsxFormatError(`row ${rowNumber}: bad or out-of-order cell reference "${ref}"`);
        col = next;
        cellType = attrValue(attrs, 't') ?? 'n';
        cellText = '';
        if (selfClosing) finishCell();
      } else if (name === 'v' && !selfClosing) capture = true;
      else if (name === 'is') inInline = true;
      else if (name === 'rPh' && !selfClosing) phonetic++;
      else if (name === 't' && inInline && !selfClosing) capture = phonetic === 0;
    },
    close(name) {
      if (name === 'v' || name === 't') capture = false;
      else if (name === 'is') inInline = false;
      else if (name === 'rPh') phonetic = Math.max(0, phonetic - 1);
      else if (name === 'c') finishCell();
      else if (name === 'row') {
        if (cells !== null && cells.length > 0) {
          cellBudget -= cells.length;
          if (cellBudget < 0) throw new XlsxFormatError(`the sheet holds more than ${MAX_SHEET_CELLS} cells`);
          rows.push({ row: rowNumber, cells });
        }
        cells = null;
      }
    },
    text(src, start, end, isCdata) {
      if (!capture) return;
      const raw = src.slice(start, end);
      cellText += isCdata ? raw : decodeXmlText(raw);
    },
  });
  return rows;
}

/** Reads the first worksheet, or the one named `sheetName`. Throws XlsxFormatError. */
export function readXlsxSheet(bytes: Uint8Array, sheetName?: string): SheetData {
  try {
    const first = unzipParts(bytes, (n) => n === '_rels/.rels' || n === 'xl/workbook.xml' || n === 'xl/_rels/workbook.xml.rels');
    let workbookPath = 'xl/workbook.xml';
    const rootRels = partText(first, '_rels/.rels');
    if (rootRels !== undefined) {
      for (const rel of readRelationships(rootRels).values()) {
        if (rel.type.endsWith('/officeDocument')) workbookPath = resolveTarget('', rel.target);
      }
    }
    const workbookRelsPath = relsPathOf(workbookPath);
    const meta = workbookPath === 'xl/workbook.xml' ? first : unzipParts(bytes, (n) => n === workbookPath || n === workbookRelsPath);
    const workbookXml = partText(meta, workbookPath);
    if (workbookXml === undefined) throw new XlsxFormatError(`the workbook part ${workbookPath} is missing`);
    const sheets = readSheetList(workbookXml);
    if (sheets.length === 0) throw new XlsxFormatError('the workbook lists no sheets');
    const chosen = sheetName === undefined ? sheets[0] : sheets.find((s) => s.name === sheetName);
    if (chosen === undefined) {
      throw new XlsxFormatError(`no sheet named "${sheetName}"; the workbook has: ${sheets.map((s) => `"${s.name}"`).join(', ')}`);
    }
    const relsXml = partText(meta, workbookRelsPath);
    const rels = relsXml === undefined ? new Map() : readRelationships(relsXml);
    const target = rels.get(chosen.relId);
    if (target === undefined) throw new XlsxFormatError(`sheet "${chosen.name}" has no relationship ${chosen.relId}`);
    const sheetPath = resolveTarget(workbookPath, target.target);
    let sharedPath: string | undefined;
    for (const rel of rels.values()) {
      if (rel.type.endsWith('/sharedStrings')) sharedPath = resolveTarget(workbookPath, rel.target);
    }
    const body = unzipParts(bytes, (n) => n === sheetPath || n === sharedPath);
    const sheetXml = partText(body, sheetPath);
    if (sheetXml === undefined) throw new XlsxFormatError(`the sheet part ${sheetPath} is missing`);
    const sharedXml = sharedPath === undefined ? undefined : partText(body, sharedPath);
    const shared = sharedXml === undefined ? [] : readSharedStrings(sharedXml);
    return { sheetName: chosen.name, rows: readSheetRows(sheetXml, shared) };
  } catch (e) {
    if (e instanceof XmlFormatError) throw new XlsxFormatError(`malformed XML in the workbook: ${e.message}`);
    throw e;
  }
}

/** The names of a workbook's worksheets in workbook order (for a sheet picker). Throws XlsxFormatError. */
export function listXlsxSheets(bytes: Uint8Array): string[] {
  try {
    const parts = unzipParts(bytes, (n) => n === '_rels/.rels' || n === 'xl/workbook.xml');
    let workbookPath = 'xl/workbook.xml';
    const rootRels = partText(parts, '_rels/.rels');
    if (rootRels !== undefined) {
      for (const rel of readRelationships(rootRels).values()) if (rel.type.endsWith('/officeDocument')) workbookPath = resolveTarget('', rel.target);
    }
    const meta = workbookPath === 'xl/workbook.xml' ? parts : unzipParts(bytes, (n) => n === workbookPath);
    const workbookXml = partText(meta, workbookPath);
    if (workbookXml === undefined) throw new XlsxFormatError(`the workbook part ${workbookPath} is missing`);
    return readSheetList(workbookXml).map((s) => s.name);
  } catch (e) {
    if (e instanceof XmlFormatError) throw new XlsxFormatError(`malformed XML in the workbook: ${e.message}`);
    throw e;
  }
}
