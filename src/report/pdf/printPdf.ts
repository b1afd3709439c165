// Prints the report's HTML to PDF with Chromium driven by playwright-core (Debian's
// /usr/bin/chromium unless MANYFIELD_CHROMIUM names another): A4, page numbers in the footer,
// the sections as PDF bookmarks. Figures do not split (the stylesheet's print rules).
import { existsSync } from 'node:fs';

export const DEFAULT_CHROMIUM = '/usr/bin/chromium';

export async function printReportPdf(html: string, target: string, title: string): Promise<void> {
  const executablePath = process.env.MANYFIELD_CHROMIUM ?? DEFAULT_CHROMIUM;
  if (!existsSync(executablePath)) throw new Error(`cannot print ${target}: no Chromium at ${executablePath} (install Debian's chromium or set MANYFIELD_CHROMIUM); the HTML report was still written`);
  let playwright: typeof import('playwright-core');
  try {
    playwright = await import('playwright-core');
  } catch {
    throw new Error(`cannot print ${target}: playwright-core is not installed; the HTML report was still written`);
  }
  const browser = await playwright.chromium.launch({ executablePath, args: ['--no-sandbox'] });
  try {
    const page = await browser.newPage();
    // No request leaves the page: the report is self-contained, and anything else is refused.
    await page.route('**/*', (route) => (route.request().url().startsWith('data:') ? route.continue() : route.abort()));
    await page.setContent(html, { waitUntil: 'load' });
    const esc = (s: string) => s.replace(/[&<>]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;' })[c] ?? c);
    await page.pdf({
      path: target,
      format: 'A4',
      printBackground: true,
      displayHeaderFooter: true,
      headerTemplate: `<div style="font-size:7pt;color:#5b6470;width:100%;padding:0 14mm;">${esc(title)}</div>`,
      footerTemplate: '<div style="font-size:8pt;color:#5b6470;width:100%;text-align:center;">Page <span class="pageNumber"></span> of <span class="totalPages"></span></div>',
      margin: { top: '16mm', bottom: '16mm', left: '14mm', right: '14mm' },
      outline: true,
      tagged: true,
    });
  } finally {
    await browser.close();
  }
}
