// The desktop shell prints the report's HTML to PDF with Electron's own engine: a hidden window
// in its own in-memory session that runs no script and may load nothing but the report file
// itself (the report needs nothing else), printed twice so the contents carry page numbers
// (src/report/pdf/twoPass.ts; once, unnumbered, where poppler's pdftotext is missing).
import { BrowserWindow, session } from 'electron';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { PAGE_MARGINS_MM, pageTemplates, reportTitle, tagPdf } from '../src/report/pdf/pageTemplates.js';
import { printWithContentsPages } from '../src/report/pdf/twoPass.js';
import { ManyfieldError } from '../src/api/result.js';

/** A report of 4,000 trials is a few megabytes; far more is not a report. */
const MAX_HTML_CHARS = 200 * 1024 * 1024;
const MM_PER_INCH = 25.4;

export async function printReportInWindow(html: unknown): Promise<Uint8Array> {
  if (typeof html !== 'string' || !html.startsWith('<!DOCTYPE html>') || html.length > MAX_HTML_CHARS) throw new ManyfieldError('invalid-argument', 'printReport takes the HTML of a report');
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-print-'));
  const file = join(dir, 'report.html');
  const fileUrl = pathToFileURL(file).href;
  const printSession = session.fromPartition('manyfield-print');
  printSession.webRequest.onBeforeRequest((details, callback) => callback({ cancel: !(details.url === fileUrl || details.url.startsWith('data:')) }));
  printSession.setPermissionRequestHandler((_contents, _permission, callback) => callback(false));
  const win = new BrowserWindow({ show: false, webPreferences: { session: printSession, javascript: false, sandbox: true, contextIsolation: true, nodeIntegration: false, webSecurity: true, devTools: false } });
  try {
    const printed = await printWithContentsPages(html, async (h) => {
      writeFileSync(file, h);
      await win.loadFile(file);
      const pdf = await win.webContents.printToPDF({
        pageSize: 'A4',
        printBackground: true,
        displayHeaderFooter: true,
        ...pageTemplates(reportTitle(html)),
        margins: { top: PAGE_MARGINS_MM.top / MM_PER_INCH, bottom: PAGE_MARGINS_MM.bottom / MM_PER_INCH, left: PAGE_MARGINS_MM.left / MM_PER_INCH, right: PAGE_MARGINS_MM.right / MM_PER_INCH },
        generateDocumentOutline: true,
        generateTaggedPDF: tagPdf(html),
      });
      return new Uint8Array(pdf);
    });
    return printed.pdf;
  } finally {
    win.destroy();
    rmSync(dir, { recursive: true, force: true });
  }
}
