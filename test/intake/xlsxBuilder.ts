// Writes minimal valid .xlsx workbooks for tests (the parts a spreadsheet program needs),
// zipped with fflate's zipSync.
import { strToU8, zipSync } from 'fflate';

export type CellValue = string | number | boolean | null;

export interface SheetSpec {
  readonly name: string;
  /** Rows from spreadsheet row `firstRow` on; null cells are left out (a gap). */
  readonly rows: readonly (readonly CellValue[])[];
  readonly firstRow?: number;
}

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

export function columnName(index: number): string {
  let n = index + 1;
  let s = '';
  while (n > 0) {
    const r = (n - 1) % 26;
    s = String.fromCharCode(65 + r) + s;
    n = Math.floor((n - 1) / 26);
  }
  return s;
}

/** Strings go to the shared-string table when `shared`, else inline. */
export function buildXlsx(sheets: readonly SheetSpec[], shared = true): Uint8Array {
  const strings: string[] = [];
  const stringIndex = new Map<string, number>();
  const files: Record<string, Uint8Array> = {};
  sheets.forEach((sheet, s) => {
    const first = sheet.firstRow ?? 1;
    const rowsXml = sheet.rows
      .map((row, i) => {
        const r = first + i;
        const cells = row
          .map((v, c) => {
            if (v === null) return '';
            const ref = `${columnName(c)}${r}`;
            if (typeof v === 'number') return `<c r="${ref}"><v>${v}</v></c>`;
            if (typeof v === 'boolean') return `<c r="${ref}" t="b"><v>${v ? 1 : 0}</v></c>`;
            if (!shared) return `<c r="${ref}" t="inlineStr"><is><t>${esc(v)}</t></is></c>`;
            let k = stringIndex.get(v);
            if (k === undefined) {
              k = strings.length;
              strings.push(v);
              stringIndex.set(v, k);
            }
            return `<c r="${ref}" t="s"><v>${k}</v></c>`;
          })
          .join('');
        return `<row r="${r}">${cells}</row>`;
      })
      .join('');
    files[`xl/worksheets/sheet${s + 1}.xml`] = strToU8(
      `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>${rowsXml}</sheetData></worksheet>`,
    );
  });
  const sheetList = sheets.map((sh, s) => `<sheet name="${esc(sh.name)}" sheetId="${s + 1}" r:id="rId${s + 1}"/>`).join('');
  files['xl/workbook.xml'] = strToU8(
    `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>${sheetList}</sheets></workbook>`,
  );
  const rels = sheets.map((_, s) => `<Relationship Id="rId${s + 1}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet${s + 1}.xml"/>`).join('');
  const sharedRel = `<Relationship Id="rId${sheets.length + 1}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/>`;
  files['xl/_rels/workbook.xml.rels'] = strToU8(
    `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">${rels}${shared ? sharedRel : ''}</Relationships>`,
  );
  if (shared) {
    files['xl/sharedStrings.xml'] = strToU8(
      `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="${strings.length}" uniqueCount="${strings.length}">${strings.map((s) => `<si><t xml:space="preserve">${esc(s)}</t></si>`).join('')}</sst>`,
    );
  }
  files['_rels/.rels'] = strToU8(
    `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>`,
  );
  const overrides = sheets.map((_, s) => `<Override PartName="/xl/worksheets/sheet${s + 1}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>`).join('');
  files['[Content_Types].xml'] = strToU8(
    `<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>${overrides}${shared ? '<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>' : ''}</Types>`,
  );
  return zipSync(files);
}
