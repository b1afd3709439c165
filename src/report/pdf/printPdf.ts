// Prints the report's HTML to PDF with Chromium driven by playwright-core (Debian's
// /usr/bin/chromium unless MANYFIELD_CHROMIUM names another): A4, page numbers in the footer,
// the sections as PDF bookmarks, and page numbers in the contents (two prints, ./twoPass.ts).
// Figures do not split (the stylesheet's print rules).
import { existsSync } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import { PAGE_MARGINS_MM, pageTemplates, tagPdf } from './pageTemplates.js';
import { printWithContentsPages, type PrintedReport } from './twoPass.js';

export const DEFAULT_CHROMIUM = '/usr/bin/chromium';

/** Where Chromium is, or null when there is none to print with. */
export function chromiumPath(): string | null {
  const p = process.env.MANYFIELD_CHROMIUM ?? DEFAULT_CHROMIUM;
  return existsSync(p) ? p : null;
}

/** The report printed to PDF bytes, `what` naming the output in errors. */
export async function printReportPdfBytes(html: string, title: string, what = 'the PDF'): Promise<PrintedReport> {
  const executablePath = chromiumPath();
  if (executablePath === null) throw new Error(`cannot print ${what}: no Chromium at ${process.env.MANYFIELD_CHROMIUM ?? DEFAULT_CHROMIUM} (install Debian's chromium or set MANYFIELD_CHROMIUM)`);
  let playwright: typeof import('playwright-core');
  try {
    playwright = await import('playwright-core');
  } catch {
    throw new Error(`cannot print ${what}: playwright-core is not installed`);
  }
  const browser = await playwright.chromium.launch({ executablePath, args: ['--no-sandbox'] });
  try {
    const page = await browser.newPage();
    // No request leaves the page: the report is self-contained, and anything else is refused.
    await page.route('**/*', (route) => (route.request().url().startsWith('data:') ? route.continue() : route.abort()));
    return await printWithContentsPages(html, async (h) => {
      await page.setContent(h, { waitUntil: 'load' });
      return page.pdf({
        format: 'A4',
        printBackground: true,
        displayHeaderFooter: true,
        ...pageTemplates(title),
        margin: { top: `${PAGE_MARGINS_MM.top}mm`, bottom: `${PAGE_MARGINS_MM.bottom}mm`, left: `${PAGE_MARGINS_MM.left}mm`, right: `${PAGE_MARGINS_MM.right}mm` },
        outline: true,
        tagged: tagPdf(html),
      });
    });
  } finally {
    await browser.close();
  }
}

export async function printReportPdf(html: string, target: string, title: string): Promise<PrintedReport> {
  try {
    const printed = await printReportPdfBytes(html, title, target);
    await writeFile(target, printed.pdf);
    return printed;
  } catch (e) {
    throw new Error(`${(e as Error).message}; the HTML report was still written`);
  }
}
